/**
 * CSV of one cell's series in a snapshot's stored results: a formula's array (one column), a spectrum's columns, a
 * sweep's table (the parameter, then each output; outputs that are arrays in long form: parameter, element, value),
 * a fit's residuals. Numbers are written as JavaScript prints them (shortest text that reads back to the same double).
 */
import type { CellResult, EvaluationResult } from '../../shared/schema/result'
import { notFound } from '../errors'

function field(v: unknown): string {
  if (v === null || v === undefined) return ''
  const s = String(v)
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s
}

function header(name: string, unit?: string): string {
  return unit ? `${name} (${unit})` : name
}

function table(columns: { name: string; values: readonly unknown[] }[]): string {
  const rows = Math.max(0, ...columns.map((c) => c.values.length))
  const lines = [columns.map((c) => field(c.name)).join(',')]
  for (let i = 0; i < rows; i++) lines.push(columns.map((c) => field(c.values[i])).join(','))
  return lines.join('\r\n') + '\r\n'
}

function isNumbers(v: unknown): v is (number | null)[] {
  return Array.isArray(v) && v.every((x) => typeof x === 'number' || x === null)
}

/** The CSV text of a cell's series, or null when the cell has none. */
export function seriesCsv(cell: CellResult): string | null {
  const name = cell.name ?? cell.id ?? `cell ${cell.index}`
  const v = cell.value as unknown
  if (cell.status !== 'ok' || v === null || v === undefined) return null
  if (isNumbers(v)) return table([{ name: header(name, cell.unit), values: v }])
  if (typeof v !== 'object') return null
  const o = v as Record<string, unknown>
  if (cell.kind === 'spectrum' && o.columns && typeof o.columns === 'object') {
    const units = (o.units ?? {}) as Record<string, string>
    return table(Object.entries(o.columns as Record<string, unknown[]>).map(([col, values]) => ({ name: header(`${name}.${col}`, units[col]), values })))
  }
  if (cell.kind === 'sweep' && Array.isArray(o.parameter) && o.outputs && typeof o.outputs === 'object') {
    const parameter = o.parameter as number[]
    const outputs = Object.entries(o.outputs as Record<string, unknown[]>)
    if (outputs.every(([, rows]) => rows.every((r) => typeof r === 'number' || r === null)))
      return table([{ name: header(name, cell.unit), values: parameter }, ...outputs.map(([out, rows]) => ({ name: out, values: rows }))])
    const lines = [['parameter', 'element', ...outputs.map(([out]) => out)].map(field).join(',')]
    parameter.forEach((p, i) => {
      const len = Math.max(...outputs.map(([, rows]) => (Array.isArray(rows[i]) ? (rows[i] as unknown[]).length : 1)))
      for (let k = 0; k < len; k++) lines.push([p, k, ...outputs.map(([, rows]) => (Array.isArray(rows[i]) ? (rows[i] as unknown[])[k] : rows[i]))].map(field).join(','))
    })
    return lines.join('\r\n') + '\r\n'
  }
  if (cell.kind === 'fit' && isNumbers(o.residuals)) return table([{ name: `${name} residuals`, values: o.residuals }])
  return null
}

/** The CSV of a cell of a stored result by id (404 when there is no such cell or it has no series). */
export function cellCsv(results: EvaluationResult, cellId: string): { name: string; csv: string } {
  const cell = results.cells.find((c) => c.id === cellId)
  if (!cell) throw notFound('No cell with that id in this snapshot.')
  const csv = seriesCsv(cell)
  if (csv === null) throw notFound(`The cell ${cell.name ?? cellId} has no series to download${cell.status === 'ok' ? '' : ` (it is ${cell.status})`}.`)
  return { name: cell.name ?? cellId, csv }
}
