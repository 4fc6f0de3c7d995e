/**
 * The last results of a sheet, kept beside its copy in this browser (localCopy.ts) so that opening the sheet again
 * shows every card's result at once, marked as recomputing, while the worker computes the fresh ones. What is read
 * back is checked entry by entry: an entry from an older build that does not look like a result is dropped.
 */
import type { CellResult } from '../../shared/schema/result'

export const KEPT_RESULTS_FORMAT = 'penumbra.kept-results'

export interface KeptResults {
  format: typeof KEPT_RESULTS_FORMAT
  version: 1
  savedAt: number
  results: CellResult[]
}

const STATUSES = new Set(['ok', 'error', 'blocked'])

function looksLikeResult(r: unknown): r is CellResult {
  if (!r || typeof r !== 'object') return false
  const o = r as Record<string, unknown>
  return typeof o.id === 'string' && typeof o.kind === 'string' && typeof o.index === 'number' && typeof o.status === 'string' && STATUSES.has(o.status)
}

/** What is stored: the results that carry a cell id. */
export function packKeptResults(results: Record<string, CellResult>, now = Date.now()): KeptResults {
  return { format: KEPT_RESULTS_FORMAT, version: 1, savedAt: now, results: Object.values(results).filter((r) => typeof r.id === 'string') }
}

/** The results read back, or [] when the stored value is missing or not ours. */
export function unpackKeptResults(stored: unknown): CellResult[] {
  if (!stored || typeof stored !== 'object') return []
  const o = stored as Partial<KeptResults>
  if (o.format !== KEPT_RESULTS_FORMAT || o.version !== 1 || !Array.isArray(o.results)) return []
  return o.results.filter(looksLikeResult)
}
