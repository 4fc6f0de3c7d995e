/**
 * The series of a snapshot that download as CSV: every array a cell computed, each figure trace as x and y columns,
 * a spectrum's columns, a sweep's parameter with its scalar outputs. Values as stored (display units, SI where none).
 */
import type { CellResult, SweepValue } from '../../shared/schema/result'
import type { SheetCell } from '../../shared/schema/sheet'

export interface Column {
  name: string
  unit: string
  values: readonly number[]
}

export interface Series {
  /** What the menu says: "alpha", "fig1: E → alpha". */
  label: string
  /** File name without extension. */
  file: string
  columns: Column[]
}

const isNumbers = (v: unknown): v is number[] => Array.isArray(v) && v.every((x) => typeof x === 'number' || x === null)

function arrayColumn(name: string, results: Record<string, CellResult | undefined>): Column | null {
  const r = results[name]
  return r && r.status === 'ok' && isNumbers(r.value) ? { name, unit: r.unit ?? '', values: r.value } : null
}

export function seriesOf(cells: readonly SheetCell[], byId: Record<string, CellResult | undefined>): Series[] {
  const byName: Record<string, CellResult | undefined> = {}
  for (const c of cells) if (c.name) byName[c.name] = byId[c.id]
  const out: Series[] = []
  for (const c of cells) {
    if (!c.name) continue
    if (c.kind === 'formula' || c.kind === 'parameter') {
      const col = arrayColumn(c.name, byName)
      if (col) out.push({ label: c.name, file: c.name, columns: [col] })
    } else if (c.kind === 'spectrum') {
      const columns = Object.entries(c.columns ?? {}).map(([k, col]) => ({ name: `${c.name}.${k}`, unit: col.unit ?? '', values: col.values as number[] }))
      if (columns.length) out.push({ label: `${c.name} (spectrum)`, file: c.name, columns })
    } else if (c.kind === 'sweep') {
      const r = byName[c.name]
      const v = r?.status === 'ok' ? (r.value as SweepValue | undefined) : undefined
      if (v && Array.isArray(v.parameter)) {
        const columns: Column[] = [{ name: c.parameter, unit: c.unit ?? '', values: v.parameter }]
        for (const [k, rows] of Object.entries(v.outputs ?? {})) if (isNumbers(rows)) columns.push({ name: k, unit: byName[k]?.unit ?? '', values: rows })
        if (columns.length > 1) out.push({ label: `${c.name} (sweep)`, file: c.name, columns })
      }
    }
  }
  for (const c of cells) {
    if (c.kind !== 'figure') continue
    c.traces.forEach((t, i) => {
      const x = arrayColumn(t.x, byName)
      const y = arrayColumn(t.y, byName)
      if (x && y && x.values.length === y.values.length)
        out.push({ label: `${c.name ?? c.title ?? 'figure'}: ${t.x} → ${t.y}`, file: `${c.name ?? 'figure'}-${i + 1}`, columns: [x, y] })
    })
  }
  return out
}

function cell(text: string): string {
  return /[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text
}

/** Comma-separated, a header row of `name (unit)`, full precision (shortest round-trip form), empty for missing. */
export function toCsv(columns: readonly Column[]): string {
  const header = columns.map((c) => cell(c.unit ? `${c.name} (${c.unit})` : c.name)).join(',')
  const n = Math.max(0, ...columns.map((c) => c.values.length))
  const lines = [header]
  for (let i = 0; i < n; i++) lines.push(columns.map((c) => (typeof c.values[i] === 'number' && Number.isFinite(c.values[i]) ? String(c.values[i]) : '')).join(','))
  return lines.join('\n') + '\n'
}

/** Hands a CSV to the browser as a download. */
export function saveCsv(name: string, text: string): void {
  const url = URL.createObjectURL(new Blob([text], { type: 'text/csv;charset=utf-8' }))
  const a = document.createElement('a')
  a.href = url
  a.download = `${name.replace(/[\\/:*?"<>|]+/g, '_')}.csv`
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(url), 10_000)
}
