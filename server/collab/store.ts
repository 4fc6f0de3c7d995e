/**
 * The collaboration server's persistence hooks over SQLite: load a document (compacted state, then the rows after
 * it), append accepted updates in one synchronous transaction, and compact (state row written and covered rows
 * deleted in one transaction). The connection and registry code never touch SQL.
 */
import { and, count, eq, gt, lte, sql } from 'drizzle-orm'
import * as Y from 'yjs'
import type { Db } from '../db/client'
import { sheetStates, sheetUpdates } from '../db/schema'
import { storedUpdates } from '../services/documents'
import { startAppendWorker } from './appendWorker'

export interface LoadedDocument {
  doc: Y.Doc
  /** The compacted state covers every row with seq ≤ uptoSeq. */
  uptoSeq: number
  /** Seqs of the rows applied on top of the state, oldest first. */
  seqs: number[]
}

export interface PendingRow {
  sheetId: string
  update: Uint8Array
  userId: string | null
}

export type CompactOutcome =
  | { ok: true; uptoSeq: number; deleted: number }
  | { ok: false; reason: string; uptoSeq: number }

/** A value now, or later: the SQLite store answers at once, a network database answers with a Promise. */
export type MaybePromise<T> = T | Promise<T>

export function isPromise<T>(value: MaybePromise<T>): value is Promise<T> {
  return value instanceof Promise
}

/**
 * The hooks the registry persists through (STYLE 13: loadDocument / storeUpdate), replaceable in tests. Each may
 * answer at once or with a Promise; the registry keeps the same guarantees either way (registry.ts).
 */
export interface CollabStore {
  loadDocument(sheetId: string): MaybePromise<LoadedDocument>
  /** Appends rows in one transaction and returns their seqs in order; throws (or rejects) if the transaction fails. */
  storeUpdates(rows: readonly PendingRow[]): MaybePromise<number[]>
  /**
   * Replaces the state row and deletes the rows it now covers, in one transaction — only when the database holds
   * exactly what this process knows (`prevUptoSeq` unchanged and `coveredSeqs` are all the rows up to the new seq).
   */
  compact(sheetId: string, state: Uint8Array, prevUptoSeq: number, coveredSeqs: readonly number[]): MaybePromise<CompactOutcome>
  /**
   * Starts appending one row while the caller goes on (SQLite's append worker, appendWorker.ts): the function returned
   * waits for the commit and gives the row's seq, or throws. Undefined when the store appends only in storeUpdates.
   */
  beginAppend?(row: PendingRow): (() => number) | undefined
  /** Deletes one stored row: a row appended early whose update then failed to apply. */
  discardRow?(sheetId: string, seq: number): void
  /** Stops what the store runs beside the event loop (the append worker). */
  close?(): Promise<void>
}

export interface SqliteStoreOptions {
  /** Append writers' updates in a worker thread while they are applied (file databases only; appendWorker.ts). */
  appendWorker?: boolean
  log?: (message: string) => void
}

/** A store that always answers at once (SQLite). */
export interface SyncCollabStore extends CollabStore {
  loadDocument(sheetId: string): LoadedDocument
  storeUpdates(rows: readonly PendingRow[]): number[]
  compact(sheetId: string, state: Uint8Array, prevUptoSeq: number, coveredSeqs: readonly number[]): CompactOutcome
}

/**
 * Applies a stored state and its later updates to a fresh document, one update at a time inside one transaction.
 * Measured on a 10,000-row log (bench/cases/collab-cold-open.ts histories): faster than Y.mergeUpdates over batches of
 * 50–250 rows, and it never merges the raw log at all.
 */
export function buildDocument(state: Uint8Array | null, updates: readonly Uint8Array[], doc: Y.Doc = new Y.Doc()): Y.Doc {
  doc.transact(() => {
    if (state) Y.applyUpdate(doc, state)
    for (const update of updates) Y.applyUpdate(doc, update)
  })
  return doc
}

/**
 * Appends one row of a sheet's log. The seq is assigned in the insert itself, under SQLite's one-writer lock: one more
 * than the sheet's last row, or than its compacted state when compaction left no rows. The append worker runs it too.
 */
export const INSERT_SQL = `INSERT INTO sheet_updates (sheet_id, seq, "update", user_id, created_at)
     VALUES (@sheetId, coalesce((SELECT max(seq) FROM sheet_updates WHERE sheet_id = @sheetId), (SELECT upto_seq FROM sheet_states WHERE sheet_id = @sheetId), 0) + 1,
             @update, @userId, @createdAt)
     RETURNING seq`

export function createSqliteStore(db: Db, options: SqliteStoreOptions = {}): SyncCollabStore {
  // Every query is prepared once. The append runs for each accepted edit before it is relayed, so its transactions
  // are better-sqlite3's own (a single row commits on its own): Drizzle's `db.transaction` builds a session object per
  // call, which doubled the time an edit waited before being sent on (bench/cases/collab-latency.ts).
  const sqlite = db.$client
  // `.all()` steps the statement to its end: with `.get()` a RETURNING insert commits on reset, which skips SQLite's
  // WAL hook and so its automatic checkpoints.
  const insertRow = sqlite.prepare<{ sheetId: string; update: Buffer; userId: string | null; createdAt: number }, { seq: number }>(INSERT_SQL)
  const stateUpto = db.select({ uptoSeq: sheetStates.uptoSeq }).from(sheetStates).where(eq(sheetStates.sheetId, sql.placeholder('sheetId'))).prepare()
  const rowsInRange = db
    .select({ n: count() })
    .from(sheetUpdates)
    .where(and(eq(sheetUpdates.sheetId, sql.placeholder('sheetId')), gt(sheetUpdates.seq, sql.placeholder('after')), lte(sheetUpdates.seq, sql.placeholder('upto'))))
    .prepare()
  const writeState = db
    .insert(sheetStates)
    .values({ sheetId: sql.placeholder('sheetId'), state: sql.placeholder('state'), uptoSeq: sql.placeholder('uptoSeq'), updatedAt: sql.placeholder('updatedAt') })
    .onConflictDoUpdate({
      target: sheetStates.sheetId,
      set: { state: sql`excluded.state`, uptoSeq: sql`excluded.upto_seq`, updatedAt: sql`excluded.updated_at` },
    })
    .prepare()
  const deleteCovered = db.delete(sheetUpdates).where(and(eq(sheetUpdates.sheetId, sql.placeholder('sheetId')), lte(sheetUpdates.seq, sql.placeholder('upto')))).prepare()

  const worker = options.appendWorker && !sqlite.memory ? startAppendWorker(sqlite, INSERT_SQL, (row) => append(row, Date.now()), options.log) : null
  const deleteRow = sqlite.prepare<{ sheetId: string; seq: number }>('DELETE FROM sheet_updates WHERE sheet_id = @sheetId AND seq = @seq')
  const append = (row: PendingRow, createdAt: number) => insertRow.all({ sheetId: row.sheetId, update: toBuffer(row.update), userId: row.userId, createdAt })[0].seq
  const appendAll = sqlite.transaction((rows: readonly PendingRow[], createdAt: number) => rows.map((row) => append(row, createdAt)))

  const compactNow = sqlite.transaction((sheetId: string, state: Uint8Array, prevUptoSeq: number, uptoSeq: number, known: number): CompactOutcome => {
    const currentUpto = stateUpto.get({ sheetId })?.uptoSeq ?? 0
    if (currentUpto !== prevUptoSeq) return { ok: false, reason: `the state row moved to seq ${currentUpto} (expected ${prevUptoSeq})`, uptoSeq: currentUpto }
    const n = rowsInRange.get({ sheetId, after: prevUptoSeq, upto: uptoSeq })?.n ?? 0
    if (n !== known) return { ok: false, reason: `${n} rows up to seq ${uptoSeq}, ${known} known here`, uptoSeq: currentUpto }
    writeState.run({ sheetId, state: toBuffer(state), uptoSeq, updatedAt: Date.now() })
    const deleted = deleteCovered.run({ sheetId, upto: uptoSeq })
    return { ok: true, uptoSeq, deleted: deleted.changes }
  })

  return {
    beginAppend: worker ? (row) => worker.begin(row) : undefined,
    discardRow: (sheetId, seq) => void deleteRow.run({ sheetId, seq }),
    close: async () => worker?.stop(),
    loadDocument(sheetId) {
      const stored = storedUpdates(db, sheetId)
      const doc = buildDocument(
        stored.state,
        stored.updates.map((u) => u.update),
      )
      return { doc, uptoSeq: stored.uptoSeq, seqs: stored.updates.map((u) => u.seq) }
    },

    storeUpdates(rows) {
      const now = Date.now()
      if (rows.length === 1) return [append(rows[0], now)]
      return rows.length === 0 ? [] : appendAll(rows, now)
    },

    compact(sheetId, state, prevUptoSeq, coveredSeqs) {
      if (coveredSeqs.length === 0) return { ok: true, uptoSeq: prevUptoSeq, deleted: 0 }
      let uptoSeq = prevUptoSeq
      for (const seq of coveredSeqs) if (seq > uptoSeq) uptoSeq = seq
      return compactNow(sheetId, state, prevUptoSeq, uptoSeq, coveredSeqs.length)
    },
  }
}

function toBuffer(bytes: Uint8Array): Buffer {
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)
}
