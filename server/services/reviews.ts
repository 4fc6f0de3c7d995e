/**
 * Reviews: an owner or editor asks one or more reviewers or owners to look at a snapshot; each decides `approved` or
 * `changes-requested` with a note. A decision records the snapshot hash it was made on, and a review's state counts
 * only decisions on its own snapshot's hash, so a newer snapshot (a later edit) never inherits an approval.
 */
import { and, desc, eq, inArray } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import type { Db } from '../db/client'
import { memberships, reviewDecisions, reviews, sheets, snapshots, type ReviewDecision } from '../db/tables'
import { SNAPSHOT_PAGE_ROUTES, shortHash, type Review, type ReviewQueue, type ReviewState } from '../../shared/schema/api'
import { reviewDecisionMail, reviewRequestMail } from '../mail/messages'
import { badRequest, forbidden, notFound } from '../errors'
import { queueMail } from './mail'
import { transact } from '../db/transact'
import { newId } from './tokens'
import { users } from '../db/tables'
import type { SnapshotRow } from './snapshots'

type ReviewRow = typeof reviews.$inferSelect
type DecisionRow = typeof reviewDecisions.$inferSelect

/** Roles that may be asked to review and may decide. */
export const DECIDING_ROLES = ['owner', 'reviewer'] as const

export function stateOf(decisions: readonly Pick<DecisionRow, 'decision' | 'snapshotHash'>[], hash: string): ReviewState {
  const valid = decisions.map((d) => (d.snapshotHash === hash ? d.decision : null))
  if (valid.includes('changes-requested')) return 'changes-requested'
  if (valid.length > 0 && valid.every((d) => d === 'approved')) return 'approved'
  return 'open'
}

function decisionsOf(db: Db, reviewId: string): Promise<DecisionRow[]> {
  return db.select().from(reviewDecisions).where(eq(reviewDecisions.reviewId, reviewId))
}

/** The state of a snapshot's newest review, or null when it has none. */
export async function reviewStateOf(db: Db, snapshot: Pick<SnapshotRow, 'id' | 'hash'>): Promise<ReviewState | null> {
  const [newest] = await db.select().from(reviews).where(eq(reviews.snapshotId, snapshot.id)).orderBy(desc(reviews.createdAt)).limit(1)
  return newest ? stateOf(await decisionsOf(db, newest.id), snapshot.hash) : null
}

async function nameOf(db: Db, id: string): Promise<string> {
  return (await db.select({ name: users.name }).from(users).where(eq(users.id, id)))[0]?.name ?? 'a former member'
}

export async function reviewReply(db: Db, row: ReviewRow): Promise<Review> {
  const [snap] = await db.select({ hash: snapshots.hash, message: snapshots.message }).from(snapshots).where(eq(snapshots.id, row.snapshotId))
  const [sheet] = await db.select({ title: sheets.title }).from(sheets).where(eq(sheets.id, row.sheetId))
  const decisions = await decisionsOf(db, row.id)
  const hash = snap?.hash ?? ''
  const names = new Map<string, string>()
  for (const id of [row.requestedBy, ...decisions.map((d) => d.reviewerId)]) if (!names.has(id)) names.set(id, await nameOf(db, id))
  return {
    id: row.id,
    snapshotId: row.snapshotId,
    snapshotHash: hash,
    snapshotMessage: snap?.message ?? '',
    sheetId: row.sheetId,
    sheetTitle: sheet?.title ?? '',
    labId: row.labId,
    requestedBy: row.requestedBy,
    requestedByName: names.get(row.requestedBy)!,
    note: row.note,
    createdAt: row.createdAt,
    state: stateOf(decisions, hash),
    decisions: decisions
      .map((d) => ({
        reviewerId: d.reviewerId,
        reviewerName: names.get(d.reviewerId)!,
        // a decision made on another hash does not count (it cannot happen while snapshots are immutable)
        decision: d.snapshotHash === hash ? d.decision : null,
        note: d.snapshotHash === hash ? d.note : null,
        decidedAt: d.snapshotHash === hash ? d.decidedAt : null,
      }))
      .sort((a, b) => a.reviewerName.localeCompare(b.reviewerName)),
  }
}

function snapshotLink(deps: Pick<AppDeps, 'config'>, snapshotId: string): string {
  return `${deps.config.publicUrl}${SNAPSHOT_PAGE_ROUTES.snapshot.replace(':snapshotId', encodeURIComponent(snapshotId))}`
}

export async function createReview(deps: Pick<AppDeps, 'db' | 'mailer' | 'config'>, snapshot: SnapshotRow, requesterId: string, reviewerIds: readonly string[], note: string): Promise<Review> {
  const { db } = deps
  const ids = [...new Set(reviewerIds)]
  if (ids.includes(requesterId)) throw badRequest('Ask someone else to review your snapshot.', [{ path: 'reviewerIds', message: 'must not include you' }])
  const found = await db
    .select({ userId: memberships.userId, role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.labId, snapshot.labId), inArray(memberships.userId, ids)))
  const issues = ids.flatMap((id, i) => {
    const m = found.find((f) => f.userId === id)
    if (!m) return [{ path: `reviewerIds[${i}]`, message: 'is not a member of this lab' }]
    if (!(DECIDING_ROLES as readonly string[]).includes(m.role)) return [{ path: `reviewerIds[${i}]`, message: `is ${m.role === 'editor' ? 'an editor' : 'a viewer'}; only reviewers and owners review` }]
    return []
  })
  if (issues.length > 0) throw badRequest(`Only reviewers and owners of this lab can be asked to review: ${issues[0].path} ${issues[0].message}.`, issues)
  const row: ReviewRow = { id: newId(), snapshotId: snapshot.id, sheetId: snapshot.sheetId, labId: snapshot.labId, requestedBy: requesterId, note, createdAt: Date.now() }
  await transact(db, async (tx) => {
    await tx.insert(reviews).values(row)
    for (const reviewerId of ids) await tx.insert(reviewDecisions).values({ reviewId: row.id, reviewerId })
  })
  const reply = await reviewReply(db, row)
  const requesterName = await nameOf(db, requesterId)
  for (const reviewerId of ids) {
    const [reviewer] = await db.select().from(users).where(eq(users.id, reviewerId))
    if (!reviewer) continue
    await queueMail(deps, 'review-request', reviewer.email, reviewRequestMail({
      reviewerName: reviewer.name, requesterName, sheetTitle: reply.sheetTitle, shortHash: shortHash(snapshot.hash),
      message: snapshot.message, note, link: snapshotLink(deps, snapshot.id),
    }))
  }
  return reply
}

export async function reviewById(db: Db, id: string): Promise<ReviewRow | undefined> {
  return (await db.select().from(reviews).where(eq(reviews.id, id)))[0]
}

/** Records one reviewer's decision (again: replaces theirs) and mails the person who asked. */
export async function decideReview(deps: Pick<AppDeps, 'db' | 'mailer' | 'config'>, row: ReviewRow, reviewerId: string, decision: ReviewDecision, note: string): Promise<Review> {
  const { db } = deps
  const [mine] = await db.select().from(reviewDecisions).where(and(eq(reviewDecisions.reviewId, row.id), eq(reviewDecisions.reviewerId, reviewerId)))
  if (!mine) throw forbidden('You were not asked to review this snapshot.')
  const [snap] = await db.select({ hash: snapshots.hash }).from(snapshots).where(eq(snapshots.id, row.snapshotId))
  if (!snap) throw notFound('No such review, or you are not a member of its lab.')
  await db
    .update(reviewDecisions)
    .set({ decision, note, snapshotHash: snap.hash, decidedAt: Date.now() })
    .where(and(eq(reviewDecisions.reviewId, row.id), eq(reviewDecisions.reviewerId, reviewerId)))
  const reply = await reviewReply(db, row)
  const [requester] = await db.select().from(users).where(eq(users.id, row.requestedBy))
  if (requester && requester.id !== reviewerId)
    await queueMail(deps, 'review-decision', requester.email, reviewDecisionMail({
      requesterName: requester.name, reviewerName: await nameOf(db, reviewerId), decision, sheetTitle: reply.sheetTitle,
      shortHash: shortHash(snap.hash), note, link: snapshotLink(deps, row.snapshotId),
    }))
  return reply
}

export async function snapshotReviews(db: Db, snapshotId: string): Promise<Review[]> {
  const rows = await db.select().from(reviews).where(eq(reviews.snapshotId, snapshotId)).orderBy(desc(reviews.createdAt))
  return Promise.all(rows.map((r) => reviewReply(db, r)))
}

/** The lab's review queue for one person. */
export async function reviewQueue(db: Db, labId: string, userId: string): Promise<ReviewQueue> {
  const rows = await db.select().from(reviews).where(eq(reviews.labId, labId)).orderBy(desc(reviews.createdAt))
  const all = await Promise.all(rows.map((r) => reviewReply(db, r)))
  return {
    waiting: all.filter((r) => r.decisions.some((d) => d.reviewerId === userId && d.decision === null)),
    requested: all.filter((r) => r.requestedBy === userId),
    decided: all.filter((r) => r.state !== 'open'),
  }
}
