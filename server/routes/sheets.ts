/**
 * Sheets: /api/labs/:labId/sheets (list, create blank or from a sheet file) and /api/sheets/:sheetId (read, rename,
 * delete, export as a sheet file).
 */
import { Router, type Request } from 'express'
import multer from 'multer'
import type { AppDeps } from '../deps'
import { requireUser } from '../middleware/auth'
import { allowRoles, loadLab, loadSheet } from '../middleware/roles'
import { issuesSummary, parse } from '../middleware/validate'
import { blankSheetFile, canDeleteSheet, contentDisposition, createSheet, deleteSheet, downloadName, exportSheet, listSheets, renameSheet, sheetReply } from '../services/sheets'
import { WRITE_ROLES } from '../services/access'
import { badRequest, forbidden } from '../errors'
import { parseSheetFile, parseSheetFileText, SHEET_MEDIA_TYPE, type ParseResult, type SheetFile } from '../../shared/schema/sheet'
import { createBlankSheetBody, renameSheetBody, sheetTitleSchema } from '../../shared/schema/api'

const EDITORS_ONLY = 'Only owners and editors may do that.'

/** The sheet file a create request carries (or a blank one), or a 400 with every problem by path. */
export function sheetFileFromRequest(req: Request): SheetFile {
  let parsed: ParseResult<SheetFile>
  let title: unknown
  if (req.file) {
    parsed = parseSheetFileText(req.file.buffer.toString('utf8'))
    title = (req.body as Record<string, unknown> | undefined)?.title || undefined
  } else {
    const body = (req.body ?? {}) as Record<string, unknown>
    if (typeof body !== 'object' || Array.isArray(body)) throw badRequest('The request body must be a JSON object.', [{ path: '', message: 'must be an object' }])
    if ('format' in body || 'cells' in body) parsed = parseSheetFile(body)
    else if ('file' in body) {
      parsed = parseSheetFile(body.file)
      title = body.title
    } else return blankSheetFile(parse(createBlankSheetBody, body).title)
  }
  if (!parsed.ok) throw badRequest(issuesSummary('The sheet file has problems', parsed.issues), parsed.issues)
  const file = parsed.value
  return title === undefined ? file : { ...file, title: parse(sheetTitleSchema, title, 'The title was not accepted') }
}

export function sheetRoutes(deps: AppDeps): { labSheets: Router; sheets: Router } {
  const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: deps.config.maxBodyBytes, files: 1, fields: 5 } })
  const lab = loadLab(deps)
  const sheet = loadSheet(deps)
  const writers = allowRoles(WRITE_ROLES, EDITORS_ONLY)

  const labSheets = Router({ mergeParams: true })
  labSheets.use(requireUser)
  labSheets.get('/', lab, async (req, res) => {
    res.json({ sheets: await listSheets(deps, req.lab!.id) })
  })
  labSheets.post('/', lab, allowRoles(WRITE_ROLES, 'Only owners and editors may create sheets.'), upload.single('file'), async (req, res) => {
    const file = sheetFileFromRequest(req)
    const row = await createSheet(deps, req.lab!.id, req.user!.id, file)
    res.status(201).location(`/api/sheets/${row.id}`).json(await sheetReply(deps, row, req.lab!, req.role!, req.user!.id))
  })

  const sheets = Router()
  sheets.use(requireUser)
  sheets.get('/:sheetId', sheet, async (req, res) => {
    res.json(await sheetReply(deps, req.sheet!, req.lab!, req.role!, req.user!.id))
  })
  sheets.patch('/:sheetId', sheet, writers, async (req, res) => {
    const { title } = parse(renameSheetBody, req.body)
    res.json(await sheetReply(deps, await renameSheet(deps, req.sheet!, title), req.lab!, req.role!, req.user!.id))
  })
  sheets.delete('/:sheetId', sheet, async (req, res) => {
    if (!canDeleteSheet(req.role, req.sheet!, req.user!.id))
      throw forbidden(req.role === 'editor' ? 'Editors may delete only the sheets they made.' : 'Only owners and the editor who made a sheet may delete it.')
    await deleteSheet(deps, req.sheet!.id)
    res.status(204).end()
  })
  sheets.get('/:sheetId/file', sheet, async (req, res) => {
    const file = await exportSheet(deps, req.sheet!)
    res.set('Content-Type', `${SHEET_MEDIA_TYPE}; charset=utf-8`)
    res.set('Content-Disposition', contentDisposition(downloadName(req.sheet!.title)))
    res.set('Cache-Control', 'no-store')
    res.send(JSON.stringify(file, null, 2))
  })

  return { labSheets, sheets }
}
