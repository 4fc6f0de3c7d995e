/** Dates and counts as people read them. */

const dateTime = new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' })
const dateOnly = new Intl.DateTimeFormat(undefined, { day: 'numeric', month: 'short', year: 'numeric' })

/** `1767225600000` → "1 Jan 2026, 00:00" (in the reader's locale and time zone). */
export function formatDateTime(ms: number): string {
  return dateTime.format(new Date(ms))
}

export function formatDate(ms: number): string {
  return dateOnly.format(new Date(ms))
}

/** "just now", "5 minutes ago", "3 hours ago", "yesterday", then the date. */
export function formatAgo(ms: number, now = Date.now()): string {
  const seconds = Math.round((now - ms) / 1000)
  if (seconds < 45) return 'just now'
  const minutes = Math.round(seconds / 60)
  if (minutes < 60) return minutes === 1 ? '1 minute ago' : `${minutes} minutes ago`
  const hours = Math.round(minutes / 60)
  if (hours < 24) return hours === 1 ? '1 hour ago' : `${hours} hours ago`
  const days = Math.round(hours / 24)
  if (days === 1) return 'yesterday'
  if (days < 7) return `${days} days ago`
  return formatDate(ms)
}

/** `plural(1, 'sheet')` → "1 sheet", `plural(3, 'sheet')` → "3 sheets". */
export function plural(n: number, word: string, many = `${word}s`): string {
  return `${n} ${n === 1 ? word : many}`
}
