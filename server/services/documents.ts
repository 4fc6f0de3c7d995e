/**
 * A sheet's stored document: a compacted state row plus the update rows after it. The collaboration server appends
 * and compacts; REST export and seeding read and write through here so both see the same document.
 */
import { asc, and, eq, gt, sql } from 'drizzle-orm'
import * as Y from 'yjs'
import { isPostgres, type Db } from '../db/client'
import { sheetStates, sheetUpdates } from '../db/tables'
import { docToSheetFile, sheetFileToUpdate } from '../../shared/doc/sheetDoc'
import type { SheetFile } from '../../shared/schema/sheet'

/** Writes the initial state of a newly created sheet. */
export async function seedDocument(db: Db, sheetId: string, file: SheetFile): Promise<void> {
  const state = Buffer.from(sheetFileToUpdate(file))
  await db
    .insert(sheetStates)
    .values({ sheetId, state, uptoSeq: 0, updatedAt: Date.now() })
    .onConflictDoUpdate({ target: sheetStates.sheetId, set: { state, uptoSeq: 0, updatedAt: Date.now() } })
}

function prepareReads(db: Db) {
  return {
    state: db.select().from(sheetStates).where(eq(sheetStates.sheetId, sql.placeholder('sheetId'))).prepare(),
    updates: db
      .select({ seq: sheetUpdates.seq, update: sheetUpdates.update })
      .from(sheetUpdates)
      .where(and(eq(sheetUpdates.sheetId, sql.placeholder('sheetId')), gt(sheetUpdates.seq, sql.placeholder('after'))))
      .orderBy(asc(sheetUpdates.seq))
      .prepare(),
  }
}

/** The two reads of a stored document, prepared once per SQLite connection (every open and every freeze runs them). */
const reads = new WeakMap<object, ReturnType<typeof prepareReads>>()

export interface StoredUpdates {
  state: Uint8Array | null
  uptoSeq: number
  updates: { seq: number; update: Uint8Array }[]
}

/** The stored state and the update rows after it, oldest first: SQLite only, synchronous (the SQLite collaboration store). */
export function storedUpdates(db: Db, sheetId: string): StoredUpdates {
  if (isPostgres(db)) throw new Error('storedUpdates reads SQLite synchronously; use readStoredUpdates on PostgreSQL')
  let q = reads.get(db.$client)
  if (!q) reads.set(db.$client, (q = prepareReads(db)))
  const row = q.state.get({ sheetId })
  const uptoSeq = row?.uptoSeq ?? 0
  const updates = q.updates.all({ sheetId, after: uptoSeq })
  return { state: row ? new Uint8Array(row.state) : null, uptoSeq, updates: updates.map((u) => ({ seq: u.seq, update: new Uint8Array(u.update) })) }
}

/** The stored state and the update rows after it, oldest first, on either database (SQLite: the prepared reads above). */
export async function readStoredUpdates(db: Db, sheetId: string): Promise<StoredUpdates> {
  if (!isPostgres(db)) return storedUpdates(db, sheetId)
  const [row] = await db.select().from(sheetStates).where(eq(sheetStates.sheetId, sheetId))
  const uptoSeq = row?.uptoSeq ?? 0
  const updates = await db
    .select({ seq: sheetUpdates.seq, update: sheetUpdates.update })
    .from(sheetUpdates)
    .where(and(eq(sheetUpdates.sheetId, sheetId), gt(sheetUpdates.seq, uptoSeq)))
    .orderBy(asc(sheetUpdates.seq))
  return { state: row ? new Uint8Array(row.state) : null, uptoSeq, updates: updates.map((u) => ({ seq: u.seq, update: new Uint8Array(u.update) })) }
}

/**
 * Loads a sheet's document from the database: the state, then the remaining updates one at a time inside one
 * transaction (Y.mergeUpdates over a whole log is far slower: about 5 s for 10,000 rows against 0.1 s this way).
 */
export async function loadDocument(db: Db, sheetId: string): Promise<Y.Doc> {
  const { state, updates } = await readStoredUpdates(db, sheetId)
  const doc = new Y.Doc()
  doc.transact(() => {
    if (state) Y.applyUpdate(doc, state)
    for (const u of updates) Y.applyUpdate(doc, u.update)
  })
  return doc
}

/** The sheet file of a stored sheet (for export and snapshots). */
export async function loadSheetFile(db: Db, sheetId: string, title?: string) {
  const file = docToSheetFile(await loadDocument(db, sheetId))
  return title ? { ...file, title } : file
}
