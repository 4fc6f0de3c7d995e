/**
 * Measured spectra:
 *   POST /api/sheets/:sheetId/datasets/preview  multipart `file` (+ `options`): how the file reads, no side effect
 *   POST /api/sheets/:sheetId/datasets          multipart `file` + `options` (the confirmed mapping) → 201, stored
 *   GET  /api/datasets/:datasetId               the columns with their values, in their units
 *   GET  /api/sheets/:sheetId/cells/:cellId/csv a cell's series or table as CSV, evaluated from the live document
 * Readers of the lab may read; only owners and editors upload. File problems answer 400 with
 * `issues: [{ path: "line 12, column 3", message }]`.
 */
import { Router, type Request } from 'express'
import multer from 'multer'
import type { AppDeps } from '../deps'
import { requireUser } from '../middleware/auth'
import { allowRoles, loadSheet } from '../middleware/roles'
import { parse } from '../middleware/validate'
import { WRITE_ROLES, roleInLab } from '../services/access'
import { datasetById, inlineDatasets, storeDataset } from '../services/datasets'
import { loadSheetFile } from '../services/documents'
import { contentDisposition } from '../services/sheets'
import { sharedEvaluator } from '../services/evaluation'
import { badRequest, HttpError, notFound } from '../errors'
import { datasetImportOptions, inlineDatasetBody, type DatasetCreated, type DatasetImportOptions, type DatasetPreview, type DatasetReply } from '../../shared/schema/api'
import type { SheetCell } from '../../shared/schema/sheet'
import type { EvaluationResult } from '../../shared/schema/result'
import { issuePath, mapSpectrum, nameFromFile, parseSpectrumFile, SpectrumFileError, type ParsedSpectrumFile } from '../../shared/import/spectrumFile'
import { columnSummary, jsonValues } from '../../shared/import/spectrumCell'
import { cellCsvColumns, CsvError, csvFileName, toCsv } from '../../shared/export/csv'

const UPLOADERS_ONLY = 'Only owners and editors may upload data.'
const NO_DATASET = 'No such dataset, or you are not a member of its lab.'
/** Points per column in a preview's plot. */
const PLOT_POINTS = 400

/** A 400 for a file problem, every issue with its place. */
function fileError(err: SpectrumFileError): HttpError {
  const issues = err.issues.map((i) => ({ path: issuePath(i), message: i.message }))
  return new HttpError(400, err.message, issues.length ? issues : [{ path: '', message: err.message }], err.offer ? { offer: err.offer } : undefined)
}

function withFileErrors<T>(fn: () => T): T {
  try {
    return fn()
  } catch (err) {
    if (err instanceof SpectrumFileError) throw fileError(err)
    throw err
  }
}

function uploaded(req: Request): { bytes: Uint8Array; fileName: string } {
  const file = req.file
  if (!file || file.size === 0)
    throw badRequest('Send the measured data as the form field "file" (a .csv, .tsv, .txt, .dat or .asc text file).', [{ path: 'file', message: 'required' }])
  return { bytes: new Uint8Array(file.buffer.buffer, file.buffer.byteOffset, file.buffer.byteLength), fileName: file.originalname || 'data.csv' }
}

function options(req: Request): DatasetImportOptions {
  const raw = (req.body as Record<string, unknown> | undefined)?.options
  if (raw === undefined || raw === '') return {}
  let json: unknown
  try {
    json = typeof raw === 'string' ? JSON.parse(raw) : raw
  } catch {
    throw badRequest('The field "options" is not valid JSON.', [{ path: 'options', message: 'not valid JSON' }])
  }
  return parse(datasetImportOptions, json, 'The import options were not accepted')
}

function thin(values: Float64Array, points: number): (number | null)[] {
  const step = Math.max(1, Math.ceil(values.length / points))
  const out: (number | null)[] = []
  for (let i = 0; i < values.length; i += step) out.push(Number.isFinite(values[i]) ? values[i] : null)
  return out
}

function previewOf(file: ParsedSpectrumFile, fileName: string, opts: DatasetImportOptions): DatasetPreview {
  const plot: Record<string, (number | null)[]> = {}
  for (const [key, values] of file.values) plot[key] = thin(values, PLOT_POINTS)
  let problem: DatasetPreview['problem']
  const warnings = [...file.warnings]
  try {
    warnings.push(...mapSpectrum(file, opts).warnings)
  } catch (err) {
    if (!(err instanceof SpectrumFileError)) throw err
    problem = { error: err.message, issues: err.issues.map((i) => ({ path: issuePath(i), message: i.message })), ...(err.offer ? { offer: err.offer } : {}) }
  }
  return {
    columns: file.columns.map(({ key, label, quantity, unit, guessed, note, count, min, max }) => ({ key, label, quantity, unit, guessed, note, count, min, max })),
    samples: file.samples,
    rows: file.rows,
    warnings,
    dialect: file.dialect,
    plot,
    name: opts.name ?? nameFromFile(fileName),
    ...(problem ? { problem } : {}),
  }
}

export function datasetRoutes(deps: AppDeps): { sheetDatasets: Router; datasets: Router } {
  const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: deps.config.maxBodyBytes, files: 1, fields: 5 } })
  const sheet = loadSheet(deps)
  const writers = allowRoles(WRITE_ROLES, UPLOADERS_ONLY)

  const sheetDatasets = Router()
  sheetDatasets.use(requireUser)
  sheetDatasets.post('/:sheetId/datasets/preview', sheet, writers, upload.single('file'), (req, res) => {
    const { bytes, fileName } = uploaded(req)
    const opts = options(req)
    const file = withFileErrors(() => parseSpectrumFile(bytes))
    res.json(previewOf(file, fileName, opts))
  })
  sheetDatasets.post('/:sheetId/datasets', sheet, writers, upload.single('file'), async (req, res) => {
    if (!req.file && req.is('application/json')) {
      // a spectrum cell's inline columns (a sheet file imported into the open sheet): stored as they are
      const body = parse(inlineDatasetBody, req.body, 'The spectrum was not accepted')
      const id = await storeDataset(deps.db, { labId: req.lab!.id, sheetId: req.sheet!.id, name: body.name, sourceName: body.source ?? null, uploadedBy: req.user!.id, columns: body.columns })
      const reply: DatasetCreated = {
        id, name: body.name, source: body.source ?? '', sample: '',
        columns: body.columns.map((c) => ({ name: c.name, quantity: c.quantity ?? '', unit: c.unit, ...columnSummary(c.values) })), warnings: [],
      }
      res.status(201).location(`/api/datasets/${id}`).json(reply)
      return
    }
    const { bytes, fileName } = uploaded(req)
    const opts = options(req)
    const { file, spectrum } = withFileErrors(() => {
      const file = parseSpectrumFile(bytes)
      return { file, spectrum: mapSpectrum(file, opts) }
    })
    const name = opts.name ?? nameFromFile(fileName)
    const id = await storeDataset(deps.db, { labId: req.lab!.id, sheetId: req.sheet!.id, name, sourceName: fileName, uploadedBy: req.user!.id, columns: spectrum.columns })
    const reply: DatasetCreated = {
      id, name, source: fileName, sample: file.samples.length > 1 ? spectrum.sample : '',
      columns: spectrum.columns.map((c) => ({ name: c.name, quantity: c.quantity, unit: c.unit, ...columnSummary(c.values) })),
      warnings: [...file.warnings, ...spectrum.warnings],
    }
    res.status(201).location(`/api/datasets/${id}`).json(reply)
  })
  sheetDatasets.get('/:sheetId/cells/:cellId/csv', sheet, async (req, res) => {
    const row = req.sheet!
    const file = await inlineDatasets(deps.db, await loadSheetFile(deps.db, row.id, row.title), row.labId)
    const cellId = String(req.params.cellId)
    const cells = file.cells as SheetCell[]
    if (!cells.some((c) => c.id === cellId)) throw notFound('No such cell in this sheet.')
    const outcome = await sharedEvaluator().evaluateText(JSON.stringify(file), deps.config.evaluate.budgetMs)
    if (!outcome.ok) throw new HttpError(422, `The sheet could not be evaluated on the server (${outcome.reason}); download the CSV from the sheet page instead.`)
    const results = JSON.parse(outcome.text) as EvaluationResult
    const extra = typeof req.query.with === 'string' && req.query.with ? req.query.with.split(',').map((s) => s.trim()).filter(Boolean).slice(0, 20) : []
    let csv: string
    try {
      csv = toCsv(cellCsvColumns(results, cells, cellId, extra))
    } catch (err) {
      if (err instanceof CsvError) throw new HttpError(422, err.message)
      throw err
    }
    const cellName = cells.find((c) => c.id === cellId)?.name
    res.set('Content-Type', 'text/csv; charset=utf-8')
    res.set('Content-Disposition', contentDisposition(csvFileName(row.title, cellName)))
    res.send(csv)
  })

  const datasets = Router()
  datasets.use(requireUser)
  datasets.get('/:datasetId', async (req, res) => {
    const d = await datasetById(deps.db, String(req.params.datasetId))
    if (!d || !(await roleInLab(deps.db, d.labId, req.user!.id))) throw notFound(NO_DATASET)
    const reply: DatasetReply = {
      id: d.id, name: d.name, source: d.sourceName, createdAt: d.createdAt,
      columns: d.columns.map((c) => ({ name: c.name, ...(c.quantity ? { quantity: c.quantity } : {}), unit: c.unit, values: jsonValues(c.values) })),
    }
    // a dataset never changes: the browser may keep it
    res.set('Cache-Control', 'private, max-age=31536000, immutable')
    res.json(reply)
  })
  return { sheetDatasets, datasets }
}
