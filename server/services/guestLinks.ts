/**
 * Guest links: a random token (only its SHA-256 stored) that shows one snapshot read-only to someone without an
 * account, until it expires (1 to 90 days) or is revoked. Each view is counted.
 */
import { desc, eq, sql } from 'drizzle-orm'
import type { AppConfig } from '../config'
import type { Db } from '../db/client'
import { guestLinks } from '../db/tables'
import { SNAPSHOT_PAGE_ROUTES, type GuestLink, type GuestLinkCreated, type GuestSnapshot } from '../../shared/schema/api'
import { gone, notFound } from '../errors'
import { hashToken, newId, newToken } from './tokens'
import { snapshotById, snapshotContent, userName, type SnapshotRow } from './snapshots'

export type GuestLinkRow = typeof guestLinks.$inferSelect
const DAY_MS = 24 * 3600 * 1000

export function guestLinkState(row: Pick<GuestLinkRow, 'revokedAt' | 'expiresAt'>, now = Date.now()): GuestLink['state'] {
  return row.revokedAt !== null ? 'revoked' : row.expiresAt <= now ? 'expired' : 'active'
}

export async function guestLinkReply(db: Db, row: GuestLinkRow): Promise<GuestLink> {
  return {
    id: row.id, snapshotId: row.snapshotId, note: row.note, createdBy: row.createdBy, createdByName: await userName(db, row.createdBy),
    createdAt: row.createdAt, expiresAt: row.expiresAt, revokedAt: row.revokedAt, viewCount: row.viewCount, lastViewAt: row.lastViewAt,
    state: guestLinkState(row),
  }
}

export function guestUrl(deps: { config: Pick<AppConfig, 'publicUrl'> }, token: string): string {
  return `${deps.config.publicUrl}${SNAPSHOT_PAGE_ROUTES.guest.replace(':token', encodeURIComponent(token))}`
}

export async function createGuestLink(
  deps: { db: Db; config: Pick<AppConfig, 'publicUrl'> },
  snapshot: SnapshotRow,
  userId: string,
  o: { expiresInDays: number; note: string; token?: string; now?: number },
): Promise<GuestLinkCreated> {
  const made = o.token ? { token: o.token, hash: hashToken(o.token) } : newToken()
  const now = o.now ?? Date.now()
  const row: GuestLinkRow = {
    id: newId(), snapshotId: snapshot.id, labId: snapshot.labId, tokenHash: made.hash, note: o.note, createdBy: userId,
    createdAt: now, expiresAt: now + o.expiresInDays * DAY_MS, revokedAt: null, viewCount: 0, lastViewAt: null,
  }
  await deps.db.insert(guestLinks).values(row)
  return { ...(await guestLinkReply(deps.db, row)), url: guestUrl(deps, made.token) }
}

export async function listGuestLinks(db: Db, snapshotId: string): Promise<GuestLink[]> {
  const rows = await db.select().from(guestLinks).where(eq(guestLinks.snapshotId, snapshotId)).orderBy(desc(guestLinks.createdAt))
  return Promise.all(rows.map((r) => guestLinkReply(db, r)))
}

export async function guestLinkById(db: Db, id: string): Promise<GuestLinkRow | undefined> {
  return (await db.select().from(guestLinks).where(eq(guestLinks.id, id)))[0]
}

/** Revokes a link at once (revoking again keeps the first time). */
export async function revokeGuestLink(db: Db, row: GuestLinkRow): Promise<void> {
  if (row.revokedAt === null) await db.update(guestLinks).set({ revokedAt: Date.now() }).where(eq(guestLinks.id, row.id))
}

/** The usable link for a token (404 unknown, 410 expired or revoked), its view counted unless `countView` is false (a download). */
export async function openGuestLink(db: Db, token: string, { countView = true }: { countView?: boolean } = {}): Promise<{ link: GuestLinkRow; snapshot: SnapshotRow }> {
  const [link] = await db.select().from(guestLinks).where(eq(guestLinks.tokenHash, hashToken(token)))
  if (!link) throw notFound('This guest link does not exist. Check that it was copied whole.')
  const state = guestLinkState(link)
  if (state === 'revoked') throw gone('This guest link was revoked by the lab that shared it. Ask them for a new one.')
  if (state === 'expired') throw gone(`This guest link expired on ${new Date(link.expiresAt).toUTCString()}. Ask the lab that shared it for a new one.`)
  const snapshot = await snapshotById(db, link.snapshotId)
  if (!snapshot) throw gone('The snapshot this guest link showed no longer exists.')
  if (!countView) return { link, snapshot }
  const now = Date.now()
  await db.update(guestLinks).set({ viewCount: sql`${guestLinks.viewCount} + 1`, lastViewAt: now }).where(eq(guestLinks.id, link.id))
  return { link: { ...link, viewCount: link.viewCount + 1, lastViewAt: now }, snapshot }
}

/** What a guest sees: that snapshot's sheet file and stored results, its author's name, and nothing else of the lab. */
export async function guestSnapshot(db: Db, link: GuestLinkRow, snapshot: SnapshotRow): Promise<GuestSnapshot> {
  const { file, results } = snapshotContent(snapshot)
  return {
    hash: snapshot.hash, title: file.title, message: snapshot.message, authorName: await userName(db, snapshot.createdBy), createdAt: snapshot.createdAt,
    engineVersion: snapshot.engineVersion, expiresAt: link.expiresAt, note: link.note, file, results,
  }
}
