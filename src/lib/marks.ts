/**
 * Performance marks of the sheet page's opening (`pn:*`), read by the browser benchmark (bench/cases/browser-open.ts)
 * and visible in any browser profile. Only the first mark of each name per page load is kept.
 */
const done = new Set<string>()

export function mark(name: string): void {
  if (done.has(name) || typeof performance === 'undefined' || typeof performance.mark !== 'function') return
  done.add(name)
  performance.mark(name)
}
