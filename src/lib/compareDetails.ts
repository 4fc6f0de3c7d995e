/**
 * What the compare page works out itself from the two versions' cells and results (the server's compare reply gives
 * the lists of changed parameters, formulas, added and removed cells and moved results): cells renamed or moved
 * (matched by their stable id), fit outputs before and after with a flag when the change exceeds the combined
 * uncertainty, and a word-level diff of a formula.
 */
import { diffWords } from 'diff'
import type { CellResult } from '../../shared/schema/result'
import type { SheetCell } from '../../shared/schema/sheet'

export interface Version {
  cells: readonly SheetCell[]
  /** Results by cell id. */
  results: Record<string, CellResult | undefined>
}

export interface Renamed {
  id: string
  from: string
  to: string
}

export interface Moved {
  id: string
  name: string
  from: number
  to: number
}

/** Cells present in both versions under another name. */
export function renamedCells(a: Version, b: Version): Renamed[] {
  const before = new Map(a.cells.map((c) => [c.id, c]))
  const out: Renamed[] = []
  for (const c of b.cells) {
    const old = before.get(c.id)
    if (old && old.name && c.name && old.name !== c.name) out.push({ id: c.id, from: old.name, to: c.name })
  }
  return out
}

/**
 * Cells whose order among the cells both versions share changed: the common cells outside a longest run kept in
 * the same order (so one cell moved down reads as one move, not as every cell it passed moving up). Positions are
 * 1-based over all cells of each version.
 */
export function movedCells(a: Version, b: Version): Moved[] {
  const inB = new Set(b.cells.map((c) => c.id))
  const inA = new Set(a.cells.map((c) => c.id))
  const orderA = a.cells.filter((c) => inB.has(c.id)).map((c) => c.id)
  const orderB = b.cells.filter((c) => inA.has(c.id)).map((c) => c.id)
  // longest common subsequence of the two orders (the cells that kept their relative order)
  const n = orderA.length
  const m = orderB.length
  const table: number[][] = Array.from({ length: n + 1 }, () => new Array<number>(m + 1).fill(0))
  for (let i = n - 1; i >= 0; i--)
    for (let j = m - 1; j >= 0; j--) table[i]![j] = orderA[i] === orderB[j] ? table[i + 1]![j + 1]! + 1 : Math.max(table[i + 1]![j]!, table[i]![j + 1]!)
  const kept = new Set<string>()
  for (let i = 0, j = 0; i < n && j < m; ) {
    if (orderA[i] === orderB[j]) {
      kept.add(orderA[i]!)
      i++
      j++
    } else if (table[i + 1]![j]! >= table[i]![j + 1]!) i++
    else j++
  }
  const posA = new Map(a.cells.map((c, i) => [c.id, i + 1]))
  return b.cells
    .map((c, i) => ({ c, i }))
    .filter(({ c }) => inA.has(c.id) && !kept.has(c.id))
    .map(({ c, i }) => ({ id: c.id, name: c.name ?? `${c.kind} cell`, from: posA.get(c.id)!, to: i + 1 }))
}

export interface FitChange {
  cell: string
  output: string
  unit: string
  before: number
  beforeErr: number
  after: number
  afterErr: number
  /** |after − before| exceeds the combined standard uncertainty √(σ₁² + σ₂²). */
  significant: boolean
}

function fitOutputs(r: CellResult | undefined): Record<string, number> {
  if (!r || r.status !== 'ok' || !r.value || typeof r.value !== 'object' || Array.isArray(r.value)) return {}
  const out: Record<string, number> = {}
  for (const [k, v] of Object.entries(r.value)) if (typeof v === 'number') out[k] = v
  // model fits carry their free parameters as `params` with standard errors in `errors`
  const rec = r.value as { params?: unknown; errors?: unknown }
  if (rec.params && typeof rec.params === 'object')
    for (const [k, v] of Object.entries(rec.params as Record<string, unknown>)) if (typeof v === 'number') out[k] = v
  if (rec.errors && typeof rec.errors === 'object')
    for (const [k, v] of Object.entries(rec.errors as Record<string, unknown>)) if (typeof v === 'number') out[`${k}_err`] = v
  return out
}

/** Every fit output with an uncertainty (`X` with `X_err`) in both versions of the same fit cell, matched by id. */
export function fitChanges(a: Version, b: Version): FitChange[] {
  const out: FitChange[] = []
  const cellsA = new Map(a.cells.map((c) => [c.id, c]))
  for (const c of b.cells) {
    if (c.kind !== 'fit' || !cellsA.has(c.id)) continue
    const before = fitOutputs(a.results[c.id])
    const after = fitOutputs(b.results[c.id])
    for (const key of Object.keys(after)) {
      if (key.endsWith('_err')) continue
      const e = `${key}_err`
      if (!(key in before) || !(e in before) || !(e in after)) continue
      const delta = Math.abs(after[key]! - before[key]!)
      const combined = Math.hypot(before[e]!, after[e]!)
      out.push({
        cell: c.name ?? 'fit',
        output: key,
        // fitted energies are in the fit's unit, other outputs in SI (DESIGN §5)
        unit: key === 'Eg' || key === 'Eu' ? (c.unit ?? 'eV') : '',
        before: before[key]!,
        beforeErr: before[e]!,
        after: after[key]!,
        afterErr: after[e]!,
        significant: delta > combined,
      })
    }
  }
  return out
}

export interface DiffPart {
  text: string
  kind: 'same' | 'added' | 'removed'
}

/** A word-level diff of two formula sources (each word and punctuation mark a token). */
export function wordDiff(before: string, after: string): DiffPart[] {
  return diffWords(before, after).map((p) => ({ text: p.value, kind: p.added ? 'added' : p.removed ? 'removed' : 'same' }))
}
