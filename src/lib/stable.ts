/**
 * Computed values that keep their previous object while its content is the same, so figures that depend on them
 * are not redrawn when an unrelated cell is edited (the page's cell list and results are new objects after every
 * edit, and each new object would otherwise count as a change).
 */
import { computed, type ComputedRef } from 'vue'

/** A computed that returns its previous value while `same(previous, next)` holds. */
export function stableComputed<T>(get: () => T, same: (previous: T, next: T) => boolean): ComputedRef<T> {
  return computed((previous?: T) => {
    const next = get()
    return previous !== undefined && same(previous, next) ? previous : next
  })
}

/** The entries of `byName` for `names` only (missing ones as undefined). */
export function pick<T>(byName: Record<string, T>, names: Iterable<string>): Record<string, T | undefined> {
  const out: Record<string, T | undefined> = {}
  for (const n of names) out[n] = byName[n]
  return out
}

/** Two records with the same keys and identical (===) values. */
export function sameEntries(a: Record<string, unknown>, b: Record<string, unknown>): boolean {
  const ka = Object.keys(a)
  if (ka.length !== Object.keys(b).length) return false
  return ka.every((k) => k in b && a[k] === b[k])
}
