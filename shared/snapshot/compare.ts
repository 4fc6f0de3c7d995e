/**
 * What changed between two versions of a sheet (two snapshots, or a snapshot and the live sheet): parameters,
 * formulas (word-level text diff), other cells' settings, cells added, removed, renamed or moved, and results that
 * moved. Cells are matched by their stable id, so a renamed cell is a rename, not a removal and an addition.
 * Pure: the server's compare route and the client use the same function.
 */
import { diffWordsWithSpace } from 'diff'
import type { CellResult, EvaluationResult } from '../schema/result'
import type { CompareReply, TextPart } from '../schema/api'
import { formatNumber } from '../engine/describe'

type AnyCell = Record<string, unknown> & { kind: string; id?: string; name?: string }
export interface CompareSide {
  cells: readonly AnyCell[]
  results: EvaluationResult
}

type Body = Omit<CompareReply, 'a' | 'b'>

/** How a cell is named in the lists: its name, or `<kind> <id>` for unnamed cells (notes, unnamed figures). */
export function cellLabel(cell: AnyCell): string {
  return typeof cell.name === 'string' && cell.name ? cell.name : `${cell.kind} ${cell.id ?? '?'}`
}

/** Fields compared as a cell's "settings" (everything but identity, and what the other lists cover). */
const IDENTITY = new Set(['id', 'kind', 'name'])

function same(a: unknown, b: unknown): boolean {
  return JSON.stringify(a) === JSON.stringify(b)
}

export function wordDiff(before: string, after: string): TextPart[] {
  return diffWordsWithSpace(before, after).map((p) => {
    const part: TextPart = { value: p.value }
    if (p.added) part.added = true
    if (p.removed) part.removed = true
    return part
  })
}

export function compareSheets(a: CompareSide, b: CompareSide): Body {
  const out: Body = { parameters: [], formulas: [], settings: [], added: [], removed: [], renamed: [], moved: [], results: [] }
  const byIdA = new Map(a.cells.map((c, i) => [c.id ?? `#${i}`, { cell: c, index: i }]))
  const byIdB = new Map(b.cells.map((c, i) => [c.id ?? `#${i}`, { cell: c, index: i }]))

  for (const [id, { cell }] of byIdA) if (!byIdB.has(id)) out.removed.push(cellLabel(cell))
  for (const [id, { cell }] of byIdB) if (!byIdA.has(id)) out.added.push(cellLabel(cell))

  // a cell moved when it is not among the longest run of shared cells that kept their order, so one insertion,
  // removal or move does not "move" every cell after it
  const common = [...byIdA.keys()].filter((id) => byIdB.has(id))
  const stay = longestIncreasing(common.map((id) => byIdB.get(id)!.index)).map((i) => common[i])
  const stayed = new Set(stay)

  for (const id of common) {
    const { cell: ca, index: ia } = byIdA.get(id)!
    const { cell: cb, index: ib } = byIdB.get(id)!
    const name = cellLabel(cb)
    if (cellLabel(ca) !== name) out.renamed.push({ from: cellLabel(ca), to: name })
    if (!stayed.has(id)) out.moved.push({ name, from: ia, to: ib })
    if (ca.kind !== cb.kind) {
      out.settings.push({ name, kind: cb.kind, fields: ['kind'] })
      continue
    }
    const fields = new Set([...Object.keys(ca), ...Object.keys(cb)].filter((k) => !IDENTITY.has(k) && !same(ca[k], cb[k])))
    if (ca.kind === 'parameter' && (fields.has('value') || fields.has('unit'))) {
      const unitA = String(ca.unit ?? '')
      const unitB = String(cb.unit ?? '')
      const entry: Body['parameters'][number] = { name, before: Number(ca.value), after: Number(cb.value), unit: unitB }
      if (unitA !== unitB) entry.unitBefore = unitA
      out.parameters.push(entry)
      fields.delete('value')
      fields.delete('unit')
    }
    if (ca.kind === 'formula' && fields.has('source')) {
      const before = String(ca.source ?? '')
      const after = String(cb.source ?? '')
      out.formulas.push({ name, before, after, diff: wordDiff(before, after) })
      fields.delete('source')
    }
    if (fields.size > 0) out.settings.push({ name, kind: cb.kind, fields: [...fields].sort() })
  }

  out.results = compareResults(a, b)
  return out
}

/** Indexes of one longest strictly increasing subsequence of `xs` (patience sorting, O(n log n)). */
function longestIncreasing(xs: readonly number[]): number[] {
  const tails: number[] = []
  const prev: number[] = new Array(xs.length).fill(-1)
  xs.forEach((x, i) => {
    let lo = 0
    let hi = tails.length
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (xs[tails[mid]] < x) lo = mid + 1
      else hi = mid
    }
    if (lo > 0) prev[i] = tails[lo - 1]
    tails[lo] = i
  })
  const out: number[] = []
  for (let i = tails.length ? tails[tails.length - 1] : -1; i >= 0; i = prev[i]) out.push(i)
  return out.reverse()
}

// ---------------------------------------------------------------------------------------------------------------
// results

function relChange(before: number, after: number): number {
  if (before === after) return 0
  if (before === 0) return after > 0 ? Infinity : -Infinity
  return (after - before) / Math.abs(before)
}

function percent(x: number): string {
  if (!Number.isFinite(x)) return x > 0 ? '+∞ %' : '−∞ %'
  const p = x * 100
  return `${p >= 0 ? '+' : ''}${formatNumber(p, 3)} %`
}

function withUnit(x: number, unit?: string): string {
  return unit ? `${formatNumber(x)} ${unit}` : formatNumber(x)
}

function numericArray(v: unknown): number[] | null {
  return Array.isArray(v) && v.every((x) => typeof x === 'number' || x === null) ? (v as number[]) : null
}

/** Keys of a fit value with an `_err` companion (Eg, Eu, model parameters), then the others that are numbers. */
function fitKeys(a: Record<string, unknown>, b: Record<string, unknown>): string[] {
  const keys = new Set([...Object.keys(a), ...Object.keys(b)])
  return [...keys].filter((k) => !k.endsWith('_err') && (typeof a[k] === 'number' || typeof b[k] === 'number'))
}

function compareCellResult(name: string, ra: CellResult, rb: CellResult): Body['results'][number] | null {
  if (ra.status !== rb.status || ra.error !== rb.error) {
    const say = (r: CellResult) => (r.status === 'ok' ? 'ok' : `${r.status} (${r.error ?? ''})`)
    return { name, kind: rb.kind, change: null, note: `${say(ra)} → ${say(rb)}` }
  }
  if (same(ra.value, rb.value) && ra.unit === rb.unit) return null
  const unitNote = ra.unit !== rb.unit ? ` (unit ${ra.unit ?? 'none'} → ${rb.unit ?? 'none'})` : ''
  const va = ra.value
  const vb = rb.value
  if (typeof va === 'number' && typeof vb === 'number') {
    const change = relChange(va, vb)
    return { name, kind: rb.kind, change, note: `${withUnit(va, ra.unit)} → ${withUnit(vb, rb.unit)} (${percent(change)})${unitNote}` }
  }
  const xa = numericArray(va)
  const xb = numericArray(vb)
  if (xa && xb) {
    if (xa.length !== xb.length) return { name, kind: rb.kind, change: null, note: `${xa.length} values → ${xb.length} values${unitNote}` }
    let worst = 0
    let at = -1
    for (let i = 0; i < xa.length; i++) {
      const p = xa[i]
      const q = xb[i]
      if (p === q) continue
      const c = p === null || q === null ? Infinity : relChange(p, q)
      if (at < 0 || Math.abs(c) > Math.abs(worst) || Number.isNaN(c)) {
        worst = c
        at = i
      }
    }
    if (at < 0) return { name, kind: rb.kind, change: 0, note: `unchanged values${unitNote}` }
    return {
      name, kind: rb.kind, change: worst, index: at,
      note: `largest change ${percent(worst)} at element ${at} (${xa[at] === null ? 'none' : withUnit(xa[at], ra.unit)} → ${xb[at] === null ? 'none' : withUnit(xb[at], rb.unit)})${unitNote}`,
    }
  }
  if (rb.kind === 'fit' && va && vb && typeof va === 'object' && typeof vb === 'object') {
    const fa = va as Record<string, unknown>
    const fb = vb as Record<string, unknown>
    const fit: NonNullable<Body['results'][number]['fit']> = []
    const notes: string[] = []
    let main: number | null = null
    let flaggedAny = false
    for (const key of fitKeys(fa, fb)) {
      const before = typeof fa[key] === 'number' ? (fa[key] as number) : null
      const after = typeof fb[key] === 'number' ? (fb[key] as number) : null
      if (before === after) continue
      const beforeErr = typeof fa[`${key}_err`] === 'number' ? (fa[`${key}_err`] as number) : null
      const afterErr = typeof fb[`${key}_err`] === 'number' ? (fb[`${key}_err`] as number) : null
      const combined = beforeErr !== null && afterErr !== null ? Math.hypot(beforeErr, afterErr) : null
      const flagged = before !== null && after !== null && combined !== null && Math.abs(after - before) > combined
      flaggedAny ||= flagged
      if (main === null && before !== null && after !== null && beforeErr !== null) main = relChange(before, after)
      fit.push({ key, before, beforeErr, after, afterErr, flagged })
      if (beforeErr !== null || afterErr !== null) {
        const side = (v: number | null, e: number | null) => (v === null ? 'none' : e === null ? formatNumber(v) : `${formatNumber(v)} ± ${formatNumber(e)}`)
        notes.push(`${key} ${side(before, beforeErr)} → ${side(after, afterErr)}${flagged ? ' (beyond the combined uncertainty)' : ''}`)
      }
    }
    if (fit.length === 0) return { name, kind: rb.kind, change: 0, note: 'only non-numeric outputs changed (residuals or details)' }
    const note = notes.length > 0 ? notes.join('; ') : `${fit.map((f) => f.key).join(', ')} changed`
    return { name, kind: rb.kind, change: main, note: note + unitNote, flagged: flaggedAny, fit }
  }
  return { name, kind: rb.kind, change: null, note: `the result changed${unitNote}` }
}

function compareResults(a: CompareSide, b: CompareSide): Body['results'] {
  const out: Body['results'] = []
  const byIdA = new Map(a.results.cells.map((r) => [r.id ?? `#${r.index}`, r]))
  for (const rb of b.results.cells) {
    const ra = byIdA.get(rb.id ?? `#${rb.index}`)
    if (!ra) continue // an added cell: listed in `added`
    const label = rb.name ?? `${rb.kind} ${rb.id ?? '?'}`
    const entry = compareCellResult(label, ra, rb)
    if (entry) out.push(entry)
  }
  return out
}
