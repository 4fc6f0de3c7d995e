/**
 * Comment threads on a cell of a live sheet or of a snapshot. A thread is its first comment plus the replies that
 * name it as `parentId`; resolving and reopening act on the first comment. An `@mention` of a member mails them.
 * Every change is announced to the sheet's listeners (commentEvents.ts), which is how others see it live.
 */
import { and, asc, eq, isNull } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import type { Db } from '../db/client'
import { comments, memberships, snapshots, users } from '../db/tables'
import { SNAPSHOT_PAGE_ROUTES, type Comment } from '../../shared/schema/api'
import { mentionMail } from '../mail/messages'
import { badRequest, notFound } from '../errors'
import type { SheetRow } from '../types'
import { queueMail } from './mail'
import { newId } from './tokens'
import { publishComment } from './commentEvents'

export type CommentRow = typeof comments.$inferSelect

async function reply(db: Db, row: CommentRow): Promise<Comment> {
  const [author] = await db.select({ name: users.name }).from(users).where(eq(users.id, row.authorId))
  const [snap] = row.snapshotId ? await db.select({ hash: snapshots.hash }).from(snapshots).where(eq(snapshots.id, row.snapshotId)) : []
  return {
    id: row.id,
    sheetId: row.sheetId,
    cellId: row.cellId,
    snapshotId: row.snapshotId,
    snapshotHash: snap?.hash ?? null,
    parentId: row.parentId,
    text: row.text,
    authorId: row.authorId,
    authorName: author?.name ?? 'a former member',
    resolved: row.resolved,
    createdAt: row.createdAt,
    updatedAt: row.updatedAt,
  }
}

/** A sheet's comments, oldest first: all, only the live sheet's (`live`) or one snapshot's. */
export async function listComments(db: Db, sheetId: string, which?: string): Promise<Comment[]> {
  const where =
    which === undefined ? eq(comments.sheetId, sheetId) : which === 'live' ? and(eq(comments.sheetId, sheetId), isNull(comments.snapshotId)) : and(eq(comments.sheetId, sheetId), eq(comments.snapshotId, which))
  const rows = await db.select().from(comments).where(where).orderBy(asc(comments.createdAt), asc(comments.id))
  return Promise.all(rows.map((r) => reply(db, r)))
}

export async function commentById(db: Db, id: string): Promise<CommentRow | undefined> {
  return (await db.select().from(comments).where(eq(comments.id, id)))[0]
}

/** Words after `@` in a comment (letters, digits, `.`, `_`, `-`). */
export function mentionsIn(text: string): string[] {
  return [...text.matchAll(/(?:^|[^\w@])@([\p{L}\p{N}._-]+)/gu)].map((m) => m[1].replace(/[.]+$/, '').toLowerCase())
}

/** Lab members a comment mentions: `@` + their name without spaces, or the part of their e-mail before the @. */
export async function mentionedMembers(db: Db, labId: string, text: string): Promise<{ id: string; name: string; email: string }[]> {
  const words = new Set(mentionsIn(text))
  if (words.size === 0) return []
  const members = await db.select({ id: users.id, name: users.name, email: users.email }).from(memberships).innerJoin(users, eq(users.id, memberships.userId)).where(eq(memberships.labId, labId))
  return members.filter((m) => words.has(m.name.replace(/\s+/g, '').toLowerCase()) || words.has(m.email.split('@')[0].toLowerCase()))
}

export interface NewComment {
  cellId: string
  text: string
  snapshotId?: string
  parentId?: string
}

export async function createComment(deps: Pick<AppDeps, 'db' | 'mailer' | 'config'>, sheet: SheetRow, authorId: string, input: NewComment): Promise<Comment> {
  const { db } = deps
  let { cellId, snapshotId } = input
  let parentId: string | null = null
  if (input.parentId) {
    const parent = await commentById(db, input.parentId)
    if (!parent || parent.sheetId !== sheet.id) throw badRequest('The comment you reply to is not on this sheet.', [{ path: 'parentId', message: 'is not a comment of this sheet' }])
    parentId = parent.parentId ?? parent.id
    cellId = parent.cellId
    snapshotId = parent.snapshotId ?? undefined
  }
  let snapshotFile: string | null = null
  if (snapshotId) {
    const [snap] = await db.select({ sheetId: snapshots.sheetId, file: snapshots.file }).from(snapshots).where(eq(snapshots.id, snapshotId))
    if (!snap || snap.sheetId !== sheet.id) throw badRequest('That snapshot is not one of this sheet.', [{ path: 'snapshotId', message: 'is not a snapshot of this sheet' }])
    snapshotFile = snap.file
  }
  if (snapshotFile !== null && !input.parentId) {
    const cells = (JSON.parse(snapshotFile) as { cells: { id?: string }[] }).cells
    if (!cells.some((c) => c.id === cellId)) throw badRequest('That cell is not in the snapshot.', [{ path: 'cellId', message: 'is not a cell of the snapshot' }])
  }
  const now = Date.now()
  const row: CommentRow = {
    id: newId(), sheetId: sheet.id, labId: sheet.labId, cellId, snapshotId: snapshotId ?? null, parentId, text: input.text,
    authorId, resolved: false, resolvedBy: null, createdAt: now, updatedAt: now,
  }
  await db.insert(comments).values(row)
  const out = await reply(db, row)
  publishComment(sheet.id, out)
  const author = out.authorName
  const cell = snapshotFile ? (JSON.parse(snapshotFile) as { cells: { id?: string; name?: string; kind: string }[] }).cells.find((c) => c.id === cellId) : undefined
  const cellLabel = cell?.name ? `the cell ${cell.name}` : 'a cell'
  const link = `${deps.config.publicUrl}${snapshotId ? SNAPSHOT_PAGE_ROUTES.snapshot.replace(':snapshotId', encodeURIComponent(snapshotId)) : SNAPSHOT_PAGE_ROUTES.sheet.replace(':sheetId', encodeURIComponent(sheet.id))}?cell=${encodeURIComponent(cellId)}`
  for (const m of await mentionedMembers(db, sheet.labId, input.text)) {
    if (m.id === authorId) continue
    await queueMail(deps, 'mention', m.email, mentionMail({ name: m.name, authorName: author, sheetTitle: sheet.title, cellLabel, text: input.text, link }))
  }
  return out
}

/** Resolves or reopens the thread a comment belongs to (the change is kept on its first comment). */
export async function setResolved(db: Db, row: CommentRow, resolved: boolean, userId: string): Promise<Comment> {
  const first = row.parentId ? await commentById(db, row.parentId) : row
  if (!first) throw notFound('No such comment, or you are not a member of its lab.')
  const now = Date.now()
  await db.update(comments).set({ resolved, resolvedBy: resolved ? userId : null, updatedAt: now }).where(eq(comments.id, first.id))
  const out = await reply(db, { ...first, resolved, resolvedBy: resolved ? userId : null, updatedAt: now })
  publishComment(first.sheetId, out)
  return out
}
