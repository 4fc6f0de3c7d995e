/**
 * POST /api/evaluate: a sheet file in, the engine's result object out — the same parse and the same engine as the
 * command-line evaluator, run on a worker thread (services/evaluation.ts) so a slow sheet never blocks the server.
 * The body is read as text here and parsed in the worker; its size and the whole sheet's time are limited.
 */
import express, { Router, type RequestHandler } from 'express'
import type { AppConfig } from '../config'
import { requireUser } from '../middleware/auth'
import { issuesSummary } from '../middleware/validate'
import { sizeLabel } from '../middleware/errorHandler'
import { badRequest, HttpError } from '../errors'
import { sharedEvaluator, type SheetEvaluator } from '../services/evaluation'

/** Paths the app-wide JSON parser leaves alone (this route reads its body as text). */
export const EVALUATE_PATH = /^\/api\/evaluate\/?$/i

function formatSeconds(ms: number): string {
  return ms >= 1000 ? `${+(ms / 1000).toFixed(1)} s` : `${ms} ms`
}

export function evaluateRoutes(config: AppConfig, evaluator: () => SheetEvaluator = sharedEvaluator): Router {
  const { maxBytes, budgetMs, maxResultBytes } = config.evaluate
  const text = express.text({ type: () => true, limit: maxBytes })
  const readBody: RequestHandler = (req, res, next) => {
    text(req, res, (err?: unknown) => {
      if ((err as { type?: string } | undefined)?.type === 'entity.too.large')
        return next(new HttpError(413, `The sheet file is larger than ${sizeLabel(maxBytes)}, the most POST /api/evaluate accepts. Evaluate it with the command-line evaluator (npm run evaluate) instead.`))
      next(err)
    })
  }

  const r = Router()
  r.post('/', requireUser, readBody, async (req, res) => {
    const body = typeof req.body === 'string' ? req.body : ''
    if (body.trim() === '') throw badRequest('Send a sheet file as the request body.', [{ path: '', message: 'required' }])
    const outcome = await evaluator().evaluate(body, budgetMs)
    if (outcome.ok) {
      const { json } = outcome
      if (json.byteLength > maxResultBytes)
        throw new HttpError(422, `The sheet's results come to ${sizeLabel(json.byteLength)}, more than POST /api/evaluate sends (${sizeLabel(maxResultBytes)}). Evaluate it with the command-line evaluator (npm run evaluate) instead.`)
      // written as is: res.send would copy the body and hash it for an ETag on the main thread
      res.status(200).type('application/json').set('Content-Length', String(json.byteLength))
      res.end(Buffer.from(json.buffer, json.byteOffset, json.byteLength))
      return
    }
    switch (outcome.reason) {
      case 'invalid': {
        const notJson = outcome.issues.length === 1 && outcome.issues[0].path === '' && outcome.issues[0].message.startsWith('not valid JSON')
        throw badRequest(notJson ? 'The request body is not valid JSON.' : issuesSummary('The sheet file has problems', outcome.issues), outcome.issues)
      }
      case 'timeout':
        throw new HttpError(422, `The sheet took longer than ${formatSeconds(outcome.budgetMs)} to evaluate and was stopped. Make it lighter (shorter grids, fewer sweep steps) or evaluate it with the command-line evaluator (npm run evaluate).`)
      case 'memory':
        throw new HttpError(422, 'The sheet needs more memory to evaluate than the server gives one evaluation. Make it lighter (shorter grids, fewer sweep steps) or evaluate it with the command-line evaluator (npm run evaluate).')
      case 'busy':
        res.set('Retry-After', String(Math.ceil(budgetMs / 1000)))
        throw new HttpError(503, 'The server is busy evaluating other sheets. Try again in a few seconds.')
      case 'failed':
        console.error(`POST /api/evaluate failed: ${outcome.message}`)
        throw new HttpError(500, 'The sheet could not be evaluated on the server. Please try again.')
    }
  })
  return r
}
