/**
 * The sheet file (`*.penumbra.json`, media type `application/vnd.penumbra.sheet+json`): the exchange format read by
 * import, export, the evaluate API and the command-line evaluator. One zod schema, used on every side.
 */
import { z } from 'zod'

export const SHEET_MEDIA_TYPE = 'application/vnd.penumbra.sheet+json'
export const SHEET_FORMAT = 'penumbra.sheet'
export const SHEET_VERSION = 1

/** Cell names: a letter first, then letters, digits or `_`. */
export const IDENTIFIER = /^[A-Za-z][A-Za-z0-9_]*$/
const name = z.string().regex(IDENTIFIER, 'must start with a letter and use only letters, digits and _').max(64)
const id = z.string().min(1).max(64)
const unit = z.string().max(64)
const finite = z.number().finite()
const description = z.string().max(2000)

export const parameterCell = z.object({
  id: id.optional(),
  kind: z.literal('parameter'),
  name,
  value: finite,
  unit: unit.optional(),
  min: finite.optional(),
  max: finite.optional(),
  step: finite.positive().optional(),
  description: description.optional(),
})

export const formulaCell = z.object({
  id: id.optional(),
  kind: z.literal('formula'),
  name,
  source: z.string().max(20000),
  unit: unit.optional(),
  description: description.optional(),
})

/**
 * What a spectrum column measures (the `quantity` of a dataset column): wavelength, photon energy, wavenumber,
 * transmittance T, reflectance R, absorbance A10 (base 10), absorptance A, absorption coefficient alpha, refractive
 * index n, extinction coefficient k, or other.
 */
export const SPECTRUM_QUANTITIES = ['wavelength', 'energy', 'wavenumber', 'T', 'R', 'A10', 'A', 'alpha', 'n', 'k', 'other'] as const
export type SpectrumQuantity = (typeof SPECTRUM_QUANTITIES)[number]

/** Words for each quantity code, for the interface. */
export const QUANTITY_LABELS: Record<SpectrumQuantity, string> = {
  wavelength: 'wavelength',
  energy: 'photon energy',
  wavenumber: 'wavenumber',
  T: 'transmittance',
  R: 'reflectance',
  A10: 'absorbance (base 10)',
  A: 'absorptance',
  alpha: 'absorption coefficient α',
  n: 'refractive index n',
  k: 'extinction coefficient k',
  other: 'other',
}

/**
 * One column of a spectrum. In a sheet file it carries its `values` (in `unit`; null for an empty entry). In the live
 * document of a sheet the numbers stay in the database: the column carries only its metadata (`unit`, `quantity`,
 * `count`, `min`, `max`) and the cell's `datasetId` names the stored dataset the engine loads the values from.
 */
export const datasetColumn = z.object({
  unit: unit,
  values: z.array(z.number().nullable()).max(1_000_000).optional(),
  /** What the column measures: one of SPECTRUM_QUANTITIES when known (other strings are kept as they are). */
  quantity: z.string().max(64).optional(),
  /** Points in the column, and the range of its finite values (in `unit`): metadata for the live document. */
  count: z.number().int().nonnegative().optional(),
  min: finite.optional(),
  max: finite.optional(),
})

/**
 * A measured spectrum. Sheet file form: `{ "kind": "spectrum", "name": "filmB", "columns": { "wavelength": { "unit":
 * "nm", "quantity": "wavelength", "values": [...] }, "T": { "unit": "%", "quantity": "T", "values": [...] } } }`.
 * Live document form: the same with `datasetId` set and no `values` in the columns (metadata only), e.g.
 * `{ "kind": "spectrum", "name": "filmB", "datasetId": "ds_…", "source": "filmB.csv", "sample": "film B",
 *    "columns": { "wavelength": { "unit": "nm", "quantity": "wavelength", "count": 401, "min": 300, "max": 700 }, … } }`.
 * Formulas read the columns as `filmB.wavelength`, `filmB.T` (in SI). Export inlines the values; importing a file with
 * inline values stores them as a dataset. A column without values in a cell without `datasetId` is an error.
 */
export const spectrumCell = z.object({
  id: id.optional(),
  kind: z.literal('spectrum'),
  name,
  columns: z.record(z.string().regex(IDENTIFIER, 'column names must be identifiers'), datasetColumn),
  /** The stored dataset holding this cell's numbers (live document); export inlines them into `columns`. */
  datasetId: z.string().max(64).optional(),
  /** The name of the file the data came from. */
  source: z.string().max(500).optional(),
  /** Which sample of the file, when it held several. */
  sample: z.string().max(200).optional(),
  description: description.optional(),
})

const cellRef = z.string().regex(IDENTIFIER, 'must name a cell').max(64)

export const fitParameter = z.object({
  name: cellRef,
  start: finite.optional(),
  min: finite.optional(),
  max: finite.optional(),
})

export const fitCell = z.object({
  id: id.optional(),
  kind: z.literal('fit'),
  name,
  method: z.enum(['tauc', 'urbach', 'model']),
  x: cellRef,
  y: cellRef,
  /** Tauc exponent: 1/2 direct allowed, 2 indirect allowed, 3/2 direct forbidden, 3 indirect forbidden. */
  r: finite.positive().optional(),
  /** Fit window, in the display unit of the `x` cell. */
  from: finite.optional(),
  to: finite.optional(),
  /** Unit of the fitted energies (Eg, Eu and their errors). */
  unit: unit.optional(),
  /** method `model`: the formula cell evaluated as the model, and its free parameter cells. */
  model: cellRef.optional(),
  parameters: z.array(fitParameter).max(20).optional(),
  description: description.optional(),
})

export const sweepCell = z.object({
  id: id.optional(),
  kind: z.literal('sweep'),
  name,
  parameter: cellRef,
  from: finite,
  to: finite,
  steps: z.number().int().min(2).max(10000),
  scale: z.enum(['linear', 'log']).optional(),
  unit: unit.optional(),
  outputs: z.array(cellRef).min(1).max(20),
  description: description.optional(),
})

export const figureTrace = z.object({
  x: cellRef.or(z.string().max(200)),
  y: cellRef.or(z.string().max(200)),
  label: z.string().max(200).optional(),
  style: z.enum(['line', 'points', 'line+points']).optional(),
})

export const figureAxis = z.object({
  scale: z.enum(['linear', 'log']).optional(),
  unit: unit.optional(),
  label: z.string().max(200).optional(),
  min: finite.optional(),
  max: finite.optional(),
})

export const figureCell = z.object({
  id: id.optional(),
  kind: z.literal('figure'),
  name: name.optional(),
  title: z.string().max(200).optional(),
  traces: z.array(figureTrace).max(50),
  x: figureAxis.extend({ visibleBand: z.boolean().optional() }).optional(),
  y: figureAxis.optional(),
  /** References to band-gap energies to mark on the axis, e.g. "Eg" or "edge.Eg". */
  marks: z.array(z.string().max(200)).max(20).optional(),
  /** A sweep cell drawn as a family of curves (against the x trace's cell) or as a map. */
  sweep: cellRef.optional(),
  sweepView: z.enum(['curves', 'map']).optional(),
  description: description.optional(),
})

export const noteCell = z.object({
  id: id.optional(),
  kind: z.literal('note'),
  name: name.optional(),
  text: z.string().max(100000),
})

export const stackLayer = z.object({
  name: z.string().max(64).optional(),
  d: z.union([finite, z.string().max(2000)]),
  n: z.union([finite, z.string().max(2000)]),
  k: z.union([finite, z.string().max(2000)]).optional(),
})

/** Accepted now so files written by later versions import; evaluated once the stack cell lands. */
export const stackCell = z
  .object({
    id: id.optional(),
    kind: z.literal('stack'),
    name,
    layers: z.array(stackLayer).max(100).optional(),
    description: description.optional(),
  })
  .passthrough()

export const cell = z.discriminatedUnion('kind', [
  parameterCell,
  formulaCell,
  spectrumCell,
  fitCell,
  sweepCell,
  figureCell,
  noteCell,
  stackCell,
])

export const sheetFile = z
  .object({
    format: z.literal(SHEET_FORMAT),
    version: z.literal(SHEET_VERSION),
    title: z.string().min(1).max(200),
    cells: z.array(cell).max(2000),
  })
  .superRefine((sheet, ctx) => {
    for (const issue of duplicateIssues(sheet.cells)) ctx.addIssue({ code: 'custom', path: issue.path, message: issue.message })
  })

/**
 * Cells that reuse an earlier cell's name or id, pointing at the later use. Works on any array (not only valid cells),
 * so a file with other problems still hears about its duplicates.
 */
export function duplicateIssues(cells: readonly unknown[]): { path: (string | number)[]; message: string }[] {
  const out: { path: (string | number)[]; message: string }[] = []
  const seen = { name: new Map<string, number>(), id: new Map<string, number>() }
  cells.forEach((c, i) => {
    if (!c || typeof c !== 'object') return
    for (const key of ['name', 'id'] as const) {
      const value = (c as Record<string, unknown>)[key]
      if (typeof value !== 'string') continue
      const before = seen[key].get(value)
      if (before !== undefined) out.push({ path: ['cells', i, key], message: `duplicate ${key} "${value}" (also cells[${before}])` })
      else seen[key].set(value, i)
    }
  })
  return out
}

export type ParameterCell = z.infer<typeof parameterCell>
export type FormulaCell = z.infer<typeof formulaCell>
export type SpectrumCell = z.infer<typeof spectrumCell>
export type DatasetColumn = z.infer<typeof datasetColumn>
export type FitCell = z.infer<typeof fitCell>
export type FitParameter = z.infer<typeof fitParameter>
export type SweepCell = z.infer<typeof sweepCell>
export type FigureCell = z.infer<typeof figureCell>
export type FigureTrace = z.infer<typeof figureTrace>
export type NoteCell = z.infer<typeof noteCell>
export type StackCell = z.infer<typeof stackCell>
export type Cell = z.infer<typeof cell>
export type CellKind = Cell['kind']
export type SheetFile = z.infer<typeof sheetFile>
/** A cell as the app holds it: always with an id. */
export type SheetCell = Cell & { id: string }

export const CELL_KINDS: readonly CellKind[] = ['parameter', 'formula', 'spectrum', 'fit', 'sweep', 'figure', 'note', 'stack']

export interface SchemaIssue {
  /** JSON path in dotted/bracket form: `cells[3].source` (empty for the root). */
  path: string
  message: string
}

/** `["cells", 3, "source"]` → `cells[3].source`. */
export function formatPath(path: readonly PropertyKey[]): string {
  let out = ''
  for (const part of path) {
    if (typeof part === 'number') out += `[${part}]`
    else out += out === '' ? String(part) : `.${String(part)}`
  }
  return out
}

/**
 * Turns zod issues into plain `{ path, message }` pairs; a missing field reads "required". With the parsed `input`,
 * a cell without a `kind` reads "required" too (rather than "unknown cell kind").
 */
export function toSchemaIssues(error: z.ZodError, input?: unknown): SchemaIssue[] {
  const issues: SchemaIssue[] = []
  for (const issue of error.issues) {
    if (issue.code === 'invalid_union' && 'errors' in issue && Array.isArray(issue.errors) && issue.errors.length > 0) {
      // discriminated union with a known kind: report the branch's own problems
      const branch = issue.errors[0] as z.core.$ZodIssue[]
      for (const sub of branch) issues.push(describe(sub, [...issue.path, ...sub.path], input))
      continue
    }
    issues.push(describe(issue, issue.path, input))
  }
  return issues
}

/** zod's own wording starts like this; a message written in our schemas is kept as it is. */
const ZOD_DEFAULT = /^(Invalid input|Invalid option|Too small|Too big|Invalid string|Invalid number)/

function article(type: string): string {
  return /^[aeiou]/.test(type) ? `an ${type}` : `a ${type}`
}

function typeName(value: unknown): string {
  return value === null ? 'null' : Array.isArray(value) ? 'an array' : article(typeof value)
}

function valueAt(input: unknown, path: readonly PropertyKey[]): unknown {
  let at: unknown = input
  for (const key of path) {
    if (at === null || typeof at !== 'object') return undefined
    at = (at as Record<PropertyKey, unknown>)[key]
  }
  return at
}

function describe(issue: z.core.$ZodIssue, path: readonly PropertyKey[], input?: unknown): SchemaIssue {
  let message = issue.message
  const absent = input !== undefined && path.length > 0 && valueAt(input, path) === undefined
  if (issue.code === 'invalid_type' && /received undefined/.test(issue.message)) message = 'required'
  // a missing field of a literal or enum type (format, version, method, scale …) is missing, not of the wrong value
  else if (absent && (issue.code === 'invalid_value' || issue.code === 'invalid_type')) message = 'required'
  // a schema's own message ("required") also fires for a value of the wrong type: say what was wrong instead
  else if (issue.code === 'invalid_type' && input !== undefined && path.length > 0 && !ZOD_DEFAULT.test(issue.message))
    message = `must be ${article(issue.expected)}, not ${typeName(valueAt(input, path))}`
  else if (issue.code === 'invalid_union' && 'note' in issue && issue.note === 'No matching discriminator')
    message =
      input !== undefined && valueAt(input, path) === undefined
        ? `required; one of ${CELL_KINDS.join(', ')}`
        : `unknown cell kind; expected one of ${CELL_KINDS.join(', ')}`
  else if (issue.code === 'unrecognized_keys') message = `unknown field(s): ${issue.keys.join(', ')}`
  else if (ZOD_DEFAULT.test(issue.message)) message = plainWording(issue) ?? issue.message
  return { path: formatPath(path), message }
}

/** zod's default messages in the words the rest of Penumbra uses: "must be a number, not a string". */
function plainWording(issue: z.core.$ZodIssue): string | null {
  switch (issue.code) {
    case 'invalid_type': {
      const received = /received (\w+)/.exec(issue.message)?.[1]
      if (issue.expected === 'int') return 'must be a whole number'
      return `must be ${article(issue.expected)}${received ? `, not ${received === 'null' ? 'null' : article(received)}` : ''}`
    }
    case 'invalid_value':
      return issue.values.length === 1
        ? `must be ${JSON.stringify(issue.values[0])}`
        : `must be one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}`
    case 'too_small':
    case 'too_big': {
      const bound = Number(issue.code === 'too_small' ? issue.minimum : issue.maximum)
      const inclusive = issue.inclusive !== false
      if (issue.origin === 'string')
        return issue.code === 'too_small' ? (bound <= 1 ? 'must not be empty' : `must be at least ${bound} characters`) : `must be at most ${bound} characters`
      if (issue.origin === 'array' || issue.origin === 'set')
        return issue.code === 'too_small' ? `must have at least ${bound} item${bound === 1 ? '' : 's'}` : `must have at most ${bound} item${bound === 1 ? '' : 's'}`
      if (issue.origin === 'number' || issue.origin === 'int' || issue.origin === 'bigint')
        return issue.code === 'too_small'
          ? inclusive ? `must be at least ${bound}` : `must be greater than ${bound}`
          : inclusive ? `must be at most ${bound}` : `must be less than ${bound}`
      return null
    }
    case 'not_multiple_of':
      return `must be a multiple of ${issue.divisor}`
    default:
      return null
  }
}

export type ParseResult<T> = { ok: true; value: T } | { ok: false; issues: SchemaIssue[] }

/** Validates an already-parsed JSON value as a sheet file, listing every problem by its JSON path. */
export function parseSheetFile(input: unknown): ParseResult<SheetFile> {
  const parsed = sheetFile.safeParse(input)
  if (parsed.success) return { ok: true, value: parsed.data }
  const issues = toSchemaIssues(parsed.error, input)
  // zod skips the duplicate check once anything else failed: run it on the raw cells so every problem is listed
  const cells = input && typeof input === 'object' ? (input as { cells?: unknown }).cells : undefined
  if (Array.isArray(cells)) {
    const known = new Set(issues.map((i) => `${i.path}\n${i.message}`))
    for (const d of duplicateIssues(cells)) {
      const issue = { path: formatPath(d.path), message: d.message }
      if (!known.has(`${issue.path}\n${issue.message}`)) issues.push(issue)
    }
  }
  return { ok: false, issues: sortByCell(issues) }
}

/** Orders problems by the cell they are in (file-level ones first), keeping the order within each cell. */
function sortByCell(issues: SchemaIssue[]): SchemaIssue[] {
  const cellOf = (i: SchemaIssue) => {
    const m = /^cells\[(\d+)\]/.exec(i.path)
    return m ? Number(m[1]) : -1
  }
  return issues.map((issue, order) => ({ issue, order, cell: cellOf(issue) })).sort((a, b) => a.cell - b.cell || a.order - b.order).map((x) => x.issue)
}

/** Parses sheet-file text (a leading byte-order mark is ignored): a JSON syntax error is one issue at the root. */
export function parseSheetFileText(text: string): ParseResult<SheetFile> {
  let json: unknown
  try {
    json = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text)
  } catch (err) {
    return { ok: false, issues: [{ path: '', message: `not valid JSON: ${(err as Error).message}` }] }
  }
  return parseSheetFile(json)
}

/** Gives every cell an id (keeping the ones it has), so the app and the engine can address cells stably. */
export function withCellIds(sheet: SheetFile, makeId: () => string): SheetFile & { cells: SheetCell[] } {
  const used = new Set(sheet.cells.map((c) => c.id).filter((x): x is string => !!x))
  const cells = sheet.cells.map((c) => {
    if (c.id) return c as SheetCell
    let next = makeId()
    while (used.has(next)) next = makeId()
    used.add(next)
    return { ...c, id: next } as SheetCell
  })
  return { ...sheet, cells }
}
