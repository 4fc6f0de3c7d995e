/** POST /api/evaluate: a sheet file in, the engine's result object out (the same code as the worker and the CLI). */
import { Router } from 'express'
import { requireUser } from '../middleware/auth'
import { issuesSummary } from '../middleware/validate'
import { badRequest } from '../errors'
import { parseSheetFile } from '../../shared/schema/sheet'
import { evaluateSheet } from '../../shared/engine/index'

export function evaluateRoutes(): Router {
  const r = Router()
  r.post('/', requireUser, (req, res) => {
    const parsed = parseSheetFile(req.body)
    if (!parsed.ok) throw badRequest(issuesSummary('The sheet file has problems', parsed.issues), parsed.issues)
    res.json(evaluateSheet(parsed.value, { timeBudgetMs: 2000 }))
  })
  return r
}
