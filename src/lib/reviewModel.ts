/**
 * The client's reading of review replies: one shape for a review however the server groups its reviewers, comment
 * threads from a flat list, the short form of a snapshot hash, and the words for review states.
 */
import type { CommentRow, PersonRef, ReviewRow, ReviewState, Decision } from '../../shared/schema/review'

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

/** The first 8 hex digits of a sha256, as the timeline shows it. */
export function shortHash(hash: string): string {
  return hash.replace(/^sha256:/, '').slice(0, 8)
}

export interface Person {
  id: string
  name: string
}

export interface Reviewer extends Person {
  decision: Decision | null
  note: string
  decidedAt: number | null
}

export interface Review {
  id: string
  snapshotId: string
  sheetId: string
  sheetTitle: string
  hash: string
  snapshotMessage: string
  requestedBy: Person
  note: string
  createdAt: number
  state: ReviewState
  reviewers: Reviewer[]
}

/** A person's name from the reply, or from a list of known people (the lab's members) by id. */
export function nameOf(person: PersonRef | undefined, known: ReadonlyMap<string, string> = new Map()): Person {
  if (!person) return { id: '', name: 'someone' }
  return { id: person.id, name: person.name || known.get(person.id) || 'a former member' }
}

export function toReview(row: ReviewRow, known: ReadonlyMap<string, string> = new Map()): Review {
  const reviewers: Reviewer[] = row.reviewers
    ? row.reviewers.map((r) => {
        const id = r.userId ?? r.id ?? ''
        return { id, name: r.name || known.get(id) || 'a former member', decision: r.decision ?? null, note: r.note ?? '', decidedAt: r.decidedAt ?? null }
      })
    : row.reviewer
      ? [{ ...nameOf(row.reviewer, known), decision: row.decision ?? null, note: row.decisionNote ?? '', decidedAt: row.decidedAt ?? null }]
      : []
  return {
    id: row.id,
    snapshotId: row.snapshotId,
    sheetId: row.sheetId ?? '',
    sheetTitle: row.sheetTitle ?? '',
    hash: row.hash ?? '',
    snapshotMessage: row.snapshotMessage ?? '',
    requestedBy: nameOf(row.requestedBy, known),
    note: row.note ?? '',
    createdAt: row.createdAt ?? 0,
    state: row.state,
    reviewers,
  }
}

/** The review state a snapshot shows: the newest review's, or none. */
export function snapshotState(reviews: readonly Review[], snapshotId: string): ReviewState | 'none' {
  const mine = reviews.filter((r) => r.snapshotId === snapshotId).sort((a, b) => b.createdAt - a.createdAt)
  return mine[0]?.state ?? 'none'
}

export interface QueueSplit {
  waiting: Review[]
  requested: Review[]
  decided: Review[]
}

/** The review queue of one person: waiting for my decision, asked by me and still open, and decided. */
export function splitQueue(reviews: readonly Review[], userId: string): QueueSplit {
  const waiting: Review[] = []
  const requested: Review[] = []
  const decided: Review[] = []
  for (const r of [...reviews].sort((a, b) => b.createdAt - a.createdAt)) {
    const me = r.reviewers.find((x) => x.id === userId)
    if (r.state !== 'open') decided.push(r)
    else if (me && me.decision === null) waiting.push(r)
    else if (r.requestedBy.id === userId) requested.push(r)
    else decided.push(r)
  }
  return { waiting, requested, decided }
}

export interface Comment {
  id: string
  cellId: string
  snapshotId: string | null
  parentId: string | null
  author: Person
  text: string
  createdAt: number
  resolved: boolean
}

export interface Thread {
  root: Comment
  replies: Comment[]
}

export function toComment(row: CommentRow, known: ReadonlyMap<string, string> = new Map()): Comment {
  const author = row.author ?? (row.authorId ? { id: row.authorId, name: row.authorName ?? '' } : undefined)
  return {
    id: row.id,
    cellId: row.cellId,
    snapshotId: row.snapshotId ?? null,
    parentId: row.parentId ?? null,
    author: nameOf(author, known),
    text: row.text,
    createdAt: row.createdAt,
    resolved: row.resolved ?? false,
  }
}

/** Threads of one cell, oldest first; a reply whose first comment is missing starts its own thread. */
export function threadsOf(comments: readonly Comment[], cellId: string): Thread[] {
  const ofCell = comments.filter((c) => c.cellId === cellId).sort((a, b) => a.createdAt - b.createdAt)
  const roots = new Map<string, Thread>()
  for (const c of ofCell) if (!c.parentId || !ofCell.some((p) => p.id === c.parentId)) roots.set(c.id, { root: c, replies: [] })
  for (const c of ofCell) if (!roots.has(c.id) && c.parentId) roots.get(c.parentId)?.replies.push(c)
  return [...roots.values()]
}

/** `@name` mentions in a comment's text that match members' names (first names or full names without spaces). */
export function mentionToken(name: string): string {
  return name.trim().replace(/\s+/g, '')
}
