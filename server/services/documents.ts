/**
 * A sheet's stored document: a compacted state row plus the update rows after it. The collaboration server appends
 * and compacts; REST export and seeding read and write through here so both see the same document.
 */
import { asc, and, eq, gt, sql } from 'drizzle-orm'
import * as Y from 'yjs'
import type { Db } from '../db/client'
import { sheetStates, sheetUpdates } from '../db/schema'
import { docToSheetFile, sheetFileToUpdate } from '../../shared/doc/sheetDoc'
import type { SheetFile } from '../../shared/schema/sheet'

/** Writes the initial state of a newly created sheet. */
export function seedDocument(db: Db, sheetId: string, file: SheetFile): void {
  const state = Buffer.from(sheetFileToUpdate(file))
  db.insert(sheetStates)
    .values({ sheetId, state, uptoSeq: 0, updatedAt: Date.now() })
    .onConflictDoUpdate({ target: sheetStates.sheetId, set: { state, uptoSeq: 0, updatedAt: Date.now() } })
    .run()
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

/** The two reads of a stored document, prepared once per database handle (every open and every freeze runs them). */
const reads = new WeakMap<Db, ReturnType<typeof prepareReads>>()

/** The stored state and the update rows after it, oldest first. */
export function storedUpdates(db: Db, sheetId: string): { state: Uint8Array | null; uptoSeq: number; updates: { seq: number; update: Uint8Array }[] } {
  let q = reads.get(db)
  if (!q) reads.set(db, (q = prepareReads(db)))
  const row = q.state.get({ sheetId })
  const uptoSeq = row?.uptoSeq ?? 0
  const updates = q.updates.all({ sheetId, after: uptoSeq })
  return { state: row ? new Uint8Array(row.state) : null, uptoSeq, updates: updates.map((u) => ({ seq: u.seq, update: new Uint8Array(u.update) })) }
}

/**
 * Loads a sheet's document from the database: the state, then the remaining updates one at a time inside one
 * transaction (Y.mergeUpdates over a whole log is far slower: about 5 s for 10,000 rows against 0.1 s this way).
 */
export function loadDocument(db: Db, sheetId: string): Y.Doc {
  const { state, updates } = storedUpdates(db, sheetId)
  const doc = new Y.Doc()
  doc.transact(() => {
    if (state) Y.applyUpdate(doc, state)
    for (const u of updates) Y.applyUpdate(doc, u.update)
  })
  return doc
}

/** The sheet file of a stored sheet (for export and snapshots). */
export function loadSheetFile(db: Db, sheetId: string, title?: string) {
  const file = docToSheetFile(loadDocument(db, sheetId))
  return title ? { ...file, title } : file
}
