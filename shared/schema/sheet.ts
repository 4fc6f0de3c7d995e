/**
 * The sheet file (`*.penumbra.json`, media type `application/vnd.penumbra.sheet+json`): the exchange format read by
 * import, export, the evaluate API and the command-line evaluator. One zod schema, used on every side.
 */
import { z } from 'zod'

export const SHEET_MEDIA_TYPE = 'application/vnd.penumbra.sheet+json'
export const SHEET_FORMAT = 'penumbra.sheet'
export const SHEET_VERSION = 1

/** Cell names: a letter first, then letters, digits or `_`. */
// Cells and their parts are strict: a field the schema does not name is an error (with the right field, when one is
// close: see unknownFieldMessage), not silently dropped. The stack cell keeps its own rules.

export const IDENTIFIER = /^[A-Za-z][A-Za-z0-9_]*$/
const name = z.string().regex(IDENTIFIER, 'must start with a letter and use only letters, digits and _').max(64)
const id = z.string().min(1).max(64)
const unit = z.string().max(64)
const finite = z.number().finite()
const description = z.string().max(2000)

export const parameterCell = z.strictObject({
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

export const formulaCell = z.strictObject({
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
export const datasetColumn = z.strictObject({
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
export const spectrumCell = z.strictObject({
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

export const fitParameter = z.strictObject({
  name: cellRef,
  start: finite.optional(),
  min: finite.optional(),
  max: finite.optional(),
})

export const fitCell = z.strictObject({
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
  /**
   * A cell holding the standard deviation σ of each y value (same length as y, in the y cell's units). When given,
   * the fit minimises χ² = Σ((y − f)/σ)² and its errors come from the weights.
   */
  sigma: cellRef.optional(),
  description: description.optional(),
})

export const sweepCell = z.strictObject({
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

export const figureTrace = z.strictObject({
  x: cellRef.or(z.string().max(200)),
  y: cellRef.or(z.string().max(200)),
  label: z.string().max(200).optional(),
  style: z.enum(['line', 'points', 'line+points']).optional(),
})

export const figureAxis = z.strictObject({
  scale: z.enum(['linear', 'log']).optional(),
  unit: unit.optional(),
  label: z.string().max(200).optional(),
  min: finite.optional(),
  max: finite.optional(),
})

export const figureCell = z.strictObject({
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

export const noteCell = z.strictObject({
  id: id.optional(),
  kind: z.literal('note'),
  name: name.optional(),
  text: z.string().max(100000),
})

/** A formula written in a stack cell's field (a constant such as "1.52", a dispersion model, a spectrum column). */
const stackFormula = z.string().min(1, 'must not be empty: write a formula').max(2000)

/** One coherent layer of a stack: its thickness, refractive index n and extinction coefficient k, all formulas. */
export const stackLayer = z
  .object({
    name,
    thickness: stackFormula,
    n: stackFormula,
    k: stackFormula,
  })
  .strict()

/**
 * The substrate under a stack's layers. Without `thickness` it is semi-infinite (T is the light entering it); with a
 * thickness it is a slab with the ambient behind it, its two faces summed by intensity unless `coherent` is true.
 */
export const stackSubstrate = z
  .object({
    name,
    n: stackFormula,
    k: stackFormula,
    thickness: stackFormula.optional(),
    coherent: z.boolean().optional(),
  })
  .strict()

export const STACK_POLARIZATIONS = ['s', 'p', 'unpolarized'] as const

/**
 * A multilayer optical stack: layers from ambient to substrate over a wavelength grid, at an angle of incidence, for
 * s-, p- or unpolarised light. Every field but `polarization` and `coherent` is a formula. Its outputs are
 * `name.R`, `name.T`, `name.A` and `name.A_<layer>` over the grid (and `name.wavelength`, the grid itself).
 */
export const stackCell = z
  .object({
    id: id.optional(),
    kind: z.literal('stack'),
    name,
    /** The wavelength grid (a length, usually a cell such as `lam`). */
    wavelength: stackFormula,
    /** Ambient index (default 1). */
    ambient: stackFormula.optional(),
    /** Angle of incidence in the ambient (default 0; `45*deg`). */
    angle: stackFormula.optional(),
    polarization: z.enum(STACK_POLARIZATIONS).optional(),
    layers: z.array(stackLayer).max(50),
    substrate: stackSubstrate,
    description: description.optional(),
  })
  .strict()

/** The formula fields of a stack cell, keyed by path: wavelength, ambient, angle, layers.i.thickness|n|k, substrate.*. */
export function stackFormulas(cell: z.infer<typeof stackCell>): [string, string][] {
  const out: [string, string][] = [['wavelength', cell.wavelength]]
  if (cell.ambient !== undefined) out.push(['ambient', cell.ambient])
  if (cell.angle !== undefined) out.push(['angle', cell.angle])
  cell.layers.forEach((l, i) => out.push([`layers.${i}.thickness`, l.thickness], [`layers.${i}.n`, l.n], [`layers.${i}.k`, l.k]))
  out.push(['substrate.n', cell.substrate.n], ['substrate.k', cell.substrate.k])
  if (cell.substrate.thickness !== undefined) out.push(['substrate.thickness', cell.substrate.thickness])
  return out
}

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

/** The schema of each cell kind, by kind (own-property safe: a Map, never an object indexed by user text). */
export const CELL_SCHEMAS: ReadonlyMap<string, (typeof cell.options)[number]> = new Map(cell.options.map((o) => [o.shape.kind.value, o]))

/** True when the kind's schema keeps fields it does not name (the stack cell, until its own schema lands). */
export function keepsUnknownFields(schema: (typeof cell.options)[number]): boolean {
  const catchall = (schema._zod.def as { catchall?: { _zod: { def: { type: string } } } }).catchall
  return catchall !== undefined && catchall._zod.def.type !== 'never'
}

/** The fields a cell of each kind must have (in the live document every cell has its `id` too). */
export const REQUIRED_FIELDS: ReadonlyMap<string, ReadonlySet<string>> = new Map(
  [...CELL_SCHEMAS].map(([kind, schema]) => [
    kind,
    new Set(['id', ...Object.entries(schema.shape as Record<string, z.ZodType>).filter(([, f]) => !f.safeParse(undefined).success).map(([k]) => k)]),
  ]),
)

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
export type StackLayer = z.infer<typeof stackLayer>
export type StackSubstrate = z.infer<typeof stackSubstrate>
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
    if (issue.code === 'unrecognized_keys') {
      for (const key of issue.keys) issues.push({ path: formatPath([...issue.path, key]), message: unknownFieldMessage(issue.path, key, input) })
      continue
    }
    if (issue.code === 'invalid_union' && 'errors' in issue && Array.isArray(issue.errors) && issue.errors.length > 0) {
      // discriminated union with a known kind: report the branch's own problems
      const branch = issue.errors[0] as z.core.$ZodIssue[]
      for (const sub of branch) {
        const path = [...issue.path, ...sub.path]
        if (sub.code === 'unrecognized_keys') for (const key of sub.keys) issues.push({ path: formatPath([...path, key]), message: unknownFieldMessage(path, key, input) })
        else issues.push(describe(sub, path, input))
      }
      continue
    }
    issues.push(describe(issue, issue.path, input))
  }
  return issues
}

/** Fields people reach for that are spelt otherwise here, per part of the file: the right field(s), in words. */
const FIELD_HINTS: Record<string, Record<string, string>> = {
  fit: { window: 'the window is from/to', range: 'the window is from/to', start: 'the window is from/to', end: 'the window is from/to', xmin: 'the window is from/to', xmax: 'the window is from/to', exponent: 'the Tauc exponent is r', model_cell: 'the model formula is model' },
  sweep: { start: 'the range is from/to', end: 'the range is from/to', range: 'the range is from/to', n: 'the number of points is steps', points: 'the number of points is steps', output: 'the swept cells are outputs' },
  parameter: { default: 'the value is value', val: 'the value is value', minimum: 'the bounds are min/max', maximum: 'the bounds are min/max' },
  formula: { formula: 'the formula text is source', expression: 'the formula text is source', expr: 'the formula text is source' },
  note: { content: 'the note text is text', body: 'the note text is text', markdown: 'the note text is text' },
  figure: { series: 'the curves are traces', lines: 'the curves are traces', xaxis: 'the axes are x and y', yaxis: 'the axes are x and y' },
}

/** What a part of the file is called, and the fields it has, for the object at `path` of the parsed `input`. */
function partAt(path: readonly PropertyKey[], input: unknown): { noun: string; hintsFor: string; fields: string[] } | null {
  const fieldsOf = (schema: { shape: Record<string, unknown> }) => Object.keys(schema.shape)
  if (path.length === 2 && path[0] === 'cells' && typeof path[1] === 'number') {
    const kind = (valueAt(input, path) as { kind?: unknown } | undefined)?.kind
    const schema = typeof kind === 'string' ? CELL_SCHEMAS.get(kind) : undefined
    return schema ? { noun: `${article(kind as string)} cell`, hintsFor: kind as string, fields: fieldsOf(schema) } : null
  }
  const last = path[path.length - 1]
  const parent = path[path.length - 2]
  if (parent === 'traces') return { noun: 'a figure trace', hintsFor: 'trace', fields: fieldsOf(figureTrace) }
  if (parent === 'parameters') return { noun: 'a fit parameter', hintsFor: 'fitParameter', fields: fieldsOf(fitParameter) }
  if (parent === 'columns') return { noun: 'a spectrum column', hintsFor: 'column', fields: fieldsOf(datasetColumn) }
  if (last === 'x' || last === 'y') return { noun: 'a figure axis', hintsFor: 'axis', fields: [...fieldsOf(figureAxis), ...(last === 'x' ? ['visibleBand'] : [])] }
  return null
}

/** Edit distance of two short words (case-insensitive), capped: enough to spot a slip of the keyboard. */
function distance(a: string, b: string): number {
  a = a.toLowerCase()
  b = b.toLowerCase()
  let prev = Array.from({ length: b.length + 1 }, (_, j) => j)
  for (let i = 1; i <= a.length; i++) {
    const row = [i]
    for (let j = 1; j <= b.length; j++) row[j] = Math.min(prev[j] + 1, row[j - 1] + 1, prev[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1))
    prev = row
  }
  return prev[b.length]
}

/**
 * "not a field of a fit cell; the window is from/to": an unknown field, named with the right one where one is close
 * (a known confusion, or a field a letter or two away).
 */
export function unknownFieldMessage(path: readonly PropertyKey[], key: string, input: unknown): string {
  const part = partAt(path, input)
  if (!part) return 'not a field here'
  const hints = Object.hasOwn(FIELD_HINTS, part.hintsFor) ? FIELD_HINTS[part.hintsFor] : {}
  if (Object.hasOwn(hints, key)) return `not a field of ${part.noun}; ${hints[key]}`
  const lower = key.toLowerCase()
  const close = part.fields
    .map((f) => ({ f, d: f.toLowerCase() === lower || f.toLowerCase() === lower.replace(/s$/, '') ? 0 : distance(key, f) }))
    .filter((x) => x.d <= Math.min(2, Math.floor(x.f.length / 3)))
    .sort((a, b) => a.d - b.d)[0]
  if (close) return `not a field of ${part.noun}; did you mean ${close.f}?`
  return `not a field of ${part.noun} (its fields: ${part.fields.join(', ')})`
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
