/**
 * `npm run evaluate -- FILE --check`: recomputes an exported snapshot file (the sheet file plus `snapshot: { hash,
 * results }`) with this machine's engine and compares it with what it stores, to the last bit.
 */
import { createHash } from 'node:crypto'
import { evaluateSheet, ENGINE_VERSION, type EvaluationResult } from '../../shared/engine/index'
import { parseSheetFile } from '../../shared/schema/sheet'
import { canonicalJson, SNAPSHOT_MEMBER, withoutSnapshotMember } from '../../shared/snapshot/canonical'

/** The first place two JSON values differ, as `path: stored → recomputed`, or null when they are the same text. */
export function firstDifference(stored: unknown, computed: unknown, path = ''): string | null {
  if (JSON.stringify(stored) === JSON.stringify(computed)) return null
  if (Array.isArray(stored) && Array.isArray(computed)) {
    if (stored.length !== computed.length) return `${path || 'value'}: ${stored.length} elements stored, ${computed.length} recomputed`
    for (let i = 0; i < stored.length; i++) {
      const d = firstDifference(stored[i], computed[i], `${path}[${i}]`)
      if (d) return d
    }
  }
  if (stored && computed && typeof stored === 'object' && typeof computed === 'object' && !Array.isArray(stored) && !Array.isArray(computed)) {
    const keys = new Set([...Object.keys(stored), ...Object.keys(computed)])
    for (const key of [...keys].sort()) {
      const d = firstDifference((stored as Record<string, unknown>)[key], (computed as Record<string, unknown>)[key], path ? `${path}.${key}` : key)
      if (d) return d
    }
  }
  const show = (v: unknown) => (v === undefined ? '(nothing)' : JSON.stringify(v)?.slice(0, 200))
  return `${path || 'value'}: stored ${show(stored)}, recomputed ${show(computed)}`
}

/** Recomputes a snapshot file and compares it with what it stores. Returns the exit status; writes the verdict. */
export function checkSnapshot(text: string, where: string, out: (line: string) => void, err: (line: string) => void): number {
  let raw: unknown
  try {
    raw = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text)
  } catch (e) {
    err(`${where}: not valid JSON: ${(e as Error).message}`)
    return 2
  }
  const snap = raw && typeof raw === 'object' && !Array.isArray(raw) ? (raw as Record<string, unknown>)[SNAPSHOT_MEMBER] : undefined
  const stored = snap && typeof snap === 'object' ? (snap as { hash?: unknown; results?: unknown }) : undefined
  const results = stored?.results as EvaluationResult | undefined
  if (!stored || typeof stored.hash !== 'string' || !results || !Array.isArray(results.cells)) {
    err(`${where}: not a snapshot file: it needs a "snapshot" member with "hash" and "results" (export one with GET /api/snapshots/:id/file)`)
    return 2
  }
  const parsed = parseSheetFile(raw)
  if (!parsed.ok) {
    err(`${where}: not a valid Penumbra sheet file:`)
    for (const issue of parsed.issues) err(`${issue.path || '(root)'}: ${issue.message}`)
    return 2
  }
  const problems: string[] = []
  const hash = createHash('sha256').update(canonicalJson(withoutSnapshotMember(raw as Record<string, unknown>)), 'utf8').digest('hex')
  if (hash !== stored.hash) problems.push(`the sheet differs from the one frozen: its hash is ${hash.slice(0, 10)}, the snapshot's ${stored.hash.slice(0, 10)}`)
  const computed = evaluateSheet(parsed.value)
  if (results.engine && results.engine !== ENGINE_VERSION) err(`note: frozen with engine ${results.engine}, recomputed with engine ${ENGINE_VERSION}`)
  const byId = new Map(computed.cells.map((c) => [c.id ?? `#${c.index}`, c]))
  const seen = new Set<string>()
  for (const cell of results.cells) {
    const key = cell.id ?? `#${cell.index}`
    seen.add(key)
    const label = cell.name ?? `${cell.kind} ${cell.id ?? cell.index}`
    const again = byId.get(key)
    if (!again) {
      problems.push(`cell ${label}: stored but not in the recomputed result`)
      continue
    }
    const d = firstDifference(cell, again)
    if (d) problems.push(`cell ${label}: ${d}`)
  }
  for (const cell of computed.cells) if (!seen.has(cell.id ?? `#${cell.index}`)) problems.push(`cell ${cell.name ?? cell.id}: recomputed but not stored`)
  if (problems.length === 0) {
    out(`snapshot ${stored.hash.slice(0, 10)}: all ${results.cells.length} stored results match the recomputation bit for bit`)
    return 0
  }
  for (const p of problems) out(p)
  out(`snapshot ${stored.hash.slice(0, 10)}: ${problems.length} difference(s)`)
  return 1
}
