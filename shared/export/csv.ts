/**
 * CSV of a cell's results: a series (one or more arrays on one grid, units in the header) or a sweep's table. Built
 * from the evaluation result object, so the page (from the worker's results) and the server
 * (GET /api/sheets/:sheetId/cells/:cellId/csv) write the same file.
 *
 *  - spectrum (or any record of columns, such as a stack's outputs): every column;
 *  - formula: its values, after the grid they are drawn against (the x of a figure trace whose y is this cell), and
 *    any further cells named in `with` that have the same length;
 *  - figure: the first trace's x, then every trace's y of that length;
 *  - sweep: the parameter, then each output (scalar outputs; array outputs are one column per step);
 *  - parameter or a scalar formula: one row.
 *
 * The writing itself (csvField, csvRows, toCsv, csvHeader: RFC 4180 quoting, numbers at full precision, CRLF line
 * ends) is the one CSV writer of Penumbra: the figure toolbar's CSV (shared/plot/figureCsv.ts) uses it too.
 */
import type { CellResult, EvaluationResult, SweepValue } from '../schema/result'
import type { SheetCell } from '../schema/sheet'

export interface CsvColumn {
  header: string
  values: readonly (number | null)[]
}

export class CsvError extends Error {
  constructor(message: string) {
    super(message)
    this.name = 'CsvError'
  }
}

/** `alpha (1/cm)`: a column's name with its unit in brackets; without a unit, the bare name. */
export function csvHeader(name: string, unit: string | undefined): string {
  return unit ? `${name} (${unit})` : name
}

/**
 * One CSV field. A number at full precision (its shortest round-trip form, so reading it back gives the same double);
 * a missing or non-finite number (NaN, ±∞: a point that cannot be drawn) an empty field; text quoted (RFC 4180) when
 * it holds a comma, a double quote or a line break.
 *
 *   csvField(0.1 + 0.2)  // '0.30000000000000004'
 *   csvField('a, b')     // '"a, b"'
 */
export function csvField(value: string | number | null | undefined): string {
  if (typeof value === 'string') return /[",\n\r]/.test(value) ? `"${value.replace(/"/g, '""')}"` : value
  return typeof value === 'number' && Number.isFinite(value) ? String(value) : ''
}

/** Rows as CSV text: comma-separated fields, CRLF line ends, and a CRLF after the last row. */
export function csvRows(rows: readonly (readonly (string | number | null | undefined)[])[]): string {
  return rows.map((row) => row.map(csvField).join(',')).join('\r\n') + '\r\n'
}

/** Columns side by side under their headers; a shorter column ends in empty fields. */
export function toCsv(columns: readonly CsvColumn[]): string {
  const length = Math.max(0, ...columns.map((c) => c.values.length))
  const rows: (string | number | null | undefined)[][] = [columns.map((c) => c.header)]
  for (let r = 0; r < length; r++) rows.push(columns.map((c) => c.values[r]))
  return csvRows(rows)
}

function recordColumns(r: CellResult): CsvColumn[] | null {
  const v = r.value as { columns?: Record<string, unknown>; units?: Record<string, string> } | null | undefined
  if (!v || typeof v !== 'object' || !v.columns || typeof v.columns !== 'object') return null
  return Object.entries(v.columns).flatMap(([name, values]) =>
    Array.isArray(values) ? [{ header: csvHeader(`${r.name}.${name}`, v.units?.[name]), values: values as (number | null)[] }] : [])
}

/** The values and unit a reference names: a cell (`alpha`) or a column of a spectrum or record (`filmB.T`). */
function resolve(results: EvaluationResult, ref: string): CsvColumn | null {
  const [cellName, member] = ref.split('.', 2)
  const r = results.cells.find((c) => c.name === cellName)
  if (!r || r.status !== 'ok') return null
  if (member) return recordColumns(r)?.find((c) => c.header === ref || c.header.startsWith(`${ref} (`)) ?? null
  if (Array.isArray(r.value)) return { header: csvHeader(ref, r.unit), values: r.value as number[] }
  if (typeof r.value === 'number') return { header: csvHeader(ref, r.unit), values: [r.value] }
  return null
}

/** The CSV columns of one cell, or a CsvError saying why it has none. */
export function cellCsvColumns(results: EvaluationResult, cells: readonly SheetCell[], cellId: string, extra: readonly string[] = []): CsvColumn[] {
  const r = results.cells.find((c) => c.id === cellId)
  const cell = cells.find((c) => c.id === cellId)
  if (!r || !cell) throw new CsvError('No such cell in this sheet.')
  const label = cell.name ?? `cell ${r.index + 1}`
  if (r.status !== 'ok') throw new CsvError(`${label} has no result to export: ${r.error ?? 'it failed'}.`)
  const withExtra = (cols: CsvColumn[]): CsvColumn[] => {
    const n = cols[cols.length - 1]?.values.length ?? 0
    for (const ref of extra) {
      const c = resolve(results, ref)
      if (!c) throw new CsvError(`${ref} is not a value of this sheet that can be written to a CSV file.`)
      if (c.values.length !== n) throw new CsvError(`${ref} has ${c.values.length} values and ${label} has ${n}: a CSV file holds series on one grid.`)
      if (!cols.some((x) => x.header === c.header)) cols.push(c)
    }
    return cols
  }
  if (cell.kind === 'sweep') {
    const table = r.value as SweepValue | null
    if (!table || !Array.isArray(table.parameter)) throw new CsvError(`${label} has no table yet.`)
    const cols: CsvColumn[] = [{ header: csvHeader(cell.parameter, r.unit), values: table.parameter }]
    for (const [name, rows] of Object.entries(table.outputs)) {
      const unit = results.cells.find((c) => c.name === name)?.unit
      if (rows.every((x) => typeof x === 'number')) cols.push({ header: csvHeader(name, unit), values: rows as number[] })
      else throw new CsvError(`the output ${name} of ${label} is an array at every step; export it from a figure of the sweep, or sweep a single number`)
    }
    return cols
  }
  if (cell.kind === 'figure') {
    const traces = cell.traces ?? []
    if (traces.length === 0) throw new CsvError(`${label} has no traces.`)
    const x = resolve(results, traces[0].x)
    if (!x) throw new CsvError(`the x of ${label}'s first trace (${traces[0].x}) has no values.`)
    const cols = [x]
    for (const t of traces) {
      const y = resolve(results, t.y)
      if (y && y.values.length === x.values.length && t.x === traces[0].x && !cols.some((c) => c.header === y.header)) cols.push(y)
    }
    return withExtra(cols)
  }
  const record = recordColumns(r)
  if (record) return withExtra(record)
  if (typeof r.value === 'number') return withExtra([{ header: csvHeader(label, r.unit), values: [r.value] }])
  if (Array.isArray(r.value) && r.value.every((v) => typeof v === 'number' || v === null)) {
    const own = { header: csvHeader(label, r.unit), values: r.value as (number | null)[] }
    // the grid it is drawn against in a figure comes first
    for (const f of cells) {
      if (f.kind !== 'figure') continue
      const t = (f.traces ?? []).find((tr) => tr.y === label)
      const x = t ? resolve(results, t.x) : null
      if (x && x.values.length === own.values.length && t && !extra.includes(t.x)) return withExtra([x, own])
    }
    return withExtra([own])
  }
  throw new CsvError(`${label} is a ${cell.kind} cell; only series, spectra, sweeps, figures and numbers can be written to a CSV file.`)
}

/** A download name for a cell's CSV: `<sheet title> - <cell name>.csv`, without path separators. */
export function csvFileName(title: string, cellName: string | undefined): string {
  // eslint-disable-next-line no-control-regex -- control characters are exactly what a file name must not carry
  const base = `${title} - ${cellName ?? 'cell'}`.replace(/[\\/\u0000-\u001f\u007f]+/g, ' ').replace(/\s+/g, ' ').trim().slice(0, 150)
  return `${base || 'cell'}.csv`
}
