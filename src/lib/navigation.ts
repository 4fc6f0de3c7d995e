/** Following `?next=` after sign-in without becoming an open redirect. */

/** A `next` query value we may follow: only paths inside the app, never another site (`//host`, `/\host`, `https:`). */
export function safeNext(next: unknown): string | null {
  const value = Array.isArray(next) ? next[0] : next
  if (typeof value !== 'string') return null
  if (!value.startsWith('/') || value.startsWith('//') || value.startsWith('/\\')) return null
  return value
}
