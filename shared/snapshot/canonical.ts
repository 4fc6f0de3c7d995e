/**
 * The canonical text of a sheet file: JSON with every object's keys in code-point order, no spaces, `undefined`
 * members left out. Two files with the same content give the same text on every machine, so its SHA-256 is the
 * snapshot's content hash (the hashing itself is the caller's: `shared/` stays free of node:crypto).
 */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(sortKeys(value))
}

function sortKeys(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(sortKeys)
  if (value === null || typeof value !== 'object') return value
  const out: Record<string, unknown> = {}
  for (const key of Object.keys(value).sort()) {
    const v = (value as Record<string, unknown>)[key]
    if (v !== undefined) out[key] = sortKeys(v)
  }
  return out
}

/** The member a snapshot's exported file carries beside the sheet (left out when its hash is computed). */
export const SNAPSHOT_MEMBER = 'snapshot'

/** The sheet part of an exported snapshot file: everything but its `snapshot` member. */
export function withoutSnapshotMember(file: Record<string, unknown>): Record<string, unknown> {
  const { [SNAPSHOT_MEMBER]: _omitted, ...sheet } = file
  return sheet
}
