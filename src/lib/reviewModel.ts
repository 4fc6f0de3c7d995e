/** Words and small helpers of the review feature: review state labels, snapshot page paths, comment threads. */
import { shortHash, type Comment, type ReviewState } from '../../shared/schema/api'

export { shortHash }

export const STATE_LABELS: Record<ReviewState | 'none', string> = {
  none: 'not reviewed',
  open: 'open',
  approved: 'approved',
  'changes-requested': 'changes-requested',
}

/** Element Plus tag types per state. */
export const STATE_TAGS: Record<ReviewState | 'none', 'info' | 'warning' | 'success' | 'danger'> = {
  none: 'info',
  open: 'warning',
  approved: 'success',
  'changes-requested': 'danger',
}

/** The page of one snapshot, and of its comparison with another snapshot or with the live sheet (`live`). */
export function snapshotPath(sheetId: string, snapshotId: string, compareWith?: string): string {
  const base = `/sheets/${encodeURIComponent(sheetId)}/snapshots/${encodeURIComponent(snapshotId)}`
  return compareWith ? `${base}/compare/${encodeURIComponent(compareWith)}` : base
}

export interface Thread {
  root: Comment
  replies: Comment[]
}

/** Threads of one cell, oldest first; a reply whose first comment is missing starts its own thread. */
export function threadsOf(comments: readonly Comment[], cellId: string): Thread[] {
  const ofCell = comments.filter((c) => c.cellId === cellId).sort((a, b) => a.createdAt - b.createdAt)
  const ids = new Set(ofCell.map((c) => c.id))
  const roots = new Map<string, Thread>()
  for (const c of ofCell) if (!c.parentId || !ids.has(c.parentId)) roots.set(c.id, { root: c, replies: [] })
  for (const c of ofCell) if (!roots.has(c.id) && c.parentId) roots.get(c.parentId)?.replies.push(c)
  return [...roots.values()]
}

/** What to type after @ to mention a member: their name without spaces (the server mails that member). */
export function mentionToken(name: string): string {
  return name.trim().replace(/\s+/g, '')
}
