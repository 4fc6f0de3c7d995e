/**
 * The x series a sweep's array outputs were computed on (the wavelength or energy grid), so each row can be drawn
 * as a curve: a figure drawing this sweep names it; otherwise the nearest monotonic array of the same length among
 * the cells the first output reads.
 */
import type { SheetCell, SweepCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'
import { referencedNames } from '@/components/sheet/references'

function numbers(v: unknown): number[] | null {
  return Array.isArray(v) && v.every((x) => typeof x === 'number' || x === null) ? v.map((x) => (typeof x === 'number' ? x : NaN)) : null
}

function monotonic(values: number[]): boolean {
  let up = true
  let down = true
  for (let i = 1; i < values.length; i++) {
    if (!(values[i] >= values[i - 1])) up = false
    if (!(values[i] <= values[i - 1])) down = false
  }
  return up || down
}

export function sweepAxis(
  sweep: SweepCell & { id: string },
  cells: readonly SheetCell[],
  byName: Record<string, CellResult>,
): { values: number[]; unit: string; name: string } | null {
  const result = byName[sweep.name]
  const outputs = result?.value && typeof result.value === 'object' && 'outputs' in result.value ? (result.value.outputs as Record<string, unknown[]>) : null
  // the first output whose rows are arrays decides the length (scalar outputs need no x series)
  const arrayRow = outputs ? Object.values(outputs).map((rows) => rows?.[0]).find((row) => Array.isArray(row)) : undefined
  const length = Array.isArray(arrayRow) ? arrayRow.length : 0
  if (length < 2) return null

  const usable = (name: string) => {
    const r = byName[name]
    const values = r?.status === 'ok' ? numbers(r.value) : null
    return values && values.length === length ? { values, unit: r!.unit ?? '', name } : null
  }

  const figure = cells.find((c) => c.kind === 'figure' && c.sweep === sweep.name)
  if (figure && figure.kind === 'figure') {
    for (const t of figure.traces) {
      const hit = usable(t.x)
      if (hit) return hit
    }
  }

  const byCellName = new Map(cells.filter((c) => c.name).map((c) => [c.name!, c]))
  const seen = new Set<string>()
  const queue = [...sweep.outputs]
  while (queue.length > 0) {
    const name = queue.shift()!
    if (seen.has(name)) continue
    seen.add(name)
    const cell = byCellName.get(name)
    if (!cell) continue
    if (!sweep.outputs.includes(name)) {
      const hit = usable(name)
      if (hit && monotonic(hit.values)) return hit
    }
    for (const ref of referencedNames(cell)) if (!seen.has(ref) && byCellName.has(ref)) queue.push(ref)
  }
  return null
}
