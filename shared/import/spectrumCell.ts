/**
 * Between stored datasets and spectrum cells: the metadata a live-document spectrum cell carries for its columns,
 * and the sheet-file form with the values written in. Pure functions shared by the server (upload, export, sheet
 * import), the page (the cell an import creates) and the worker (filling a cell with the columns it loaded).
 */
import type { DatasetColumn, SpectrumCell } from '../schema/sheet'

/** One stored column: its name in formulas, what it measures, its unit and its numbers (NaN for an empty entry). */
export interface StoredColumn {
  name: string
  quantity?: string
  unit: string
  values: Float64Array | readonly (number | null)[]
}

/** Count and range of a column's finite values. */
export function columnSummary(values: ArrayLike<number | null>): { count: number; min?: number; max?: number } {
  let min = Infinity
  let max = -Infinity
  for (let i = 0; i < values.length; i++) {
    const v = values[i]
    if (typeof v !== 'number' || !Number.isFinite(v)) continue
    if (v < min) min = v
    if (v > max) max = v
  }
  return Number.isFinite(min) ? { count: values.length, min, max } : { count: values.length }
}

/** The live document's columns of a spectrum cell: metadata only, never the numbers. */
export function metadataColumns(columns: readonly StoredColumn[]): Record<string, DatasetColumn> {
  const out: Record<string, DatasetColumn> = {}
  for (const c of columns) {
    out[c.name] = { unit: c.unit, ...(c.quantity ? { quantity: c.quantity } : {}), ...columnSummary(c.values) }
  }
  return out
}

/** Values as JSON numbers (NaN and infinities become null, as the sheet file writes an empty entry). */
export function jsonValues(values: ArrayLike<number | null>): (number | null)[] {
  const out = new Array<number | null>(values.length)
  for (let i = 0; i < values.length; i++) {
    const v = values[i]
    out[i] = typeof v === 'number' && Number.isFinite(v) ? v : null
  }
  return out
}

/**
 * The cell with the dataset's values written into its columns (metadata kept). Columns of the cell the dataset lacks
 * keep what they had; the dataset's own order and units win, since the numbers are in those units.
 */
export function withValues<C extends SpectrumCell>(cell: C, columns: readonly StoredColumn[]): C {
  const filled: Record<string, DatasetColumn> = {}
  for (const c of columns) {
    const meta = cell.columns?.[c.name]
    filled[c.name] = { ...meta, unit: c.unit, ...(c.quantity ?? meta?.quantity ? { quantity: c.quantity ?? meta?.quantity } : {}), values: jsonValues(c.values) }
  }
  return { ...cell, columns: filled }
}

/** True when the cell's numbers live in a stored dataset that has not been written into its columns. */
export function needsDataset(cell: { kind?: unknown; datasetId?: unknown; columns?: unknown }): cell is SpectrumCell & { datasetId: string } {
  if (cell.kind !== 'spectrum' || typeof cell.datasetId !== 'string' || !cell.datasetId) return false
  const cols = cell.columns
  if (!cols || typeof cols !== 'object') return true
  return Object.values(cols as Record<string, { values?: unknown }>).some((c) => !c || !Array.isArray(c.values))
}

/** A spectrum cell's columns as stored columns (inline values in a sheet file), or null when any has no values. */
export function inlineColumns(cell: SpectrumCell): StoredColumn[] | null {
  const out: StoredColumn[] = []
  for (const [name, c] of Object.entries(cell.columns ?? {})) {
    if (!Array.isArray(c.values)) return null
    out.push({ name, unit: c.unit, quantity: c.quantity, values: c.values })
  }
  return out
}
