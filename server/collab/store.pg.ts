/**
 * The collaboration server's persistence hooks over PostgreSQL (DESIGN §10), for several app instances sharing one
 * database: the same tables and rules as the SQLite store (store.ts), in raw SQL through `pg`, answering with
 * Promises.
 *
 * - Appending: one transaction per flush; for each sheet in it (in sorted order, so two instances never wait on each
 *   other in a cycle) a transaction-level advisory lock, then each row's seq is one more than the sheet's last row, or
 *   than its state row's `upto_seq` when compaction emptied the log. Two instances appending to one sheet therefore
 *   get distinct, consecutive seqs.
 * - Loading: the state row and the rows after it, read by one statement (one snapshot).
 * - Compacting: under a try-lock of its own per sheet — an instance that finds it taken skips this round — and only
 *   when the database holds exactly what this instance knows (the state row unmoved, every row up to the new seq
 *   known here). Rows appended meanwhile get seqs above the new state and stay.
 */
import type { Pool, PoolClient } from 'pg'
import { buildDocument, type CollabStore, type CompactOutcome, type LoadedDocument, type PendingRow } from './store'

/** Advisory lock classes (first key of the two-key form), so these locks never meet another feature's. */
export const APPEND_LOCK = 0x5e71
export const COMPACT_LOCK = 0x5e72

/** Rows of one sheet per INSERT statement (a flush rarely holds more than a few). */
const ROWS_PER_INSERT = 200

export function createPgStore(pool: Pool): CollabStore {
  async function inTransaction<T>(work: (client: PoolClient) => Promise<T>): Promise<T> {
    const client = await pool.connect()
    // A connection lost while checked out reports here as well as failing the query: the query's error is the one used.
    const onError = () => {}
    client.on('error', onError)
    try {
      await client.query('BEGIN')
      const out = await work(client)
      await client.query('COMMIT')
      return out
    } catch (err) {
      await client.query('ROLLBACK').catch(() => {})
      throw err
    } finally {
      client.off('error', onError)
      client.release()
    }
  }

  return {
    async loadDocument(sheetId): Promise<LoadedDocument> {
      const { rows } = await pool.query<{ seq: number | null; data: Buffer; upto_seq: number | null }>(
        `WITH st AS (SELECT state, upto_seq FROM sheet_states WHERE sheet_id = $1)
         SELECT NULL::integer AS seq, state AS data, upto_seq FROM st
         UNION ALL
         SELECT u.seq, u."update", NULL FROM sheet_updates u
          WHERE u.sheet_id = $1 AND u.seq > coalesce((SELECT upto_seq FROM st), 0)
         ORDER BY seq NULLS FIRST`,
        [sheetId],
      )
      const stateRow = rows.length > 0 && rows[0].seq === null ? rows[0] : null
      const updates = stateRow ? rows.slice(1) : rows
      const doc = buildDocument(
        stateRow ? new Uint8Array(stateRow.data) : null,
        updates.map((r) => new Uint8Array(r.data)),
      )
      return { doc, uptoSeq: Number(stateRow?.upto_seq ?? 0), seqs: updates.map((r) => Number(r.seq)) }
    },

    async storeUpdates(rows: readonly PendingRow[]): Promise<number[]> {
      if (rows.length === 0) return []
      const bySheet = new Map<string, number[]>()
      rows.forEach((row, i) => {
        const list = bySheet.get(row.sheetId)
        if (list) list.push(i)
        else bySheet.set(row.sheetId, [i])
      })
      const seqs = new Array<number>(rows.length)
      const createdAt = Date.now()
      await inTransaction(async (client) => {
        for (const sheetId of [...bySheet.keys()].sort()) {
          await client.query('SELECT pg_advisory_xact_lock($1, hashtext($2))', [APPEND_LOCK, sheetId])
          const indexes = bySheet.get(sheetId)!
          for (let from = 0; from < indexes.length; from += ROWS_PER_INSERT) {
            const part = indexes.slice(from, from + ROWS_PER_INSERT)
            // The seqs continue from the sheet's last row (or its state's cover), in the order of the rows.
            const { rows: inserted } = await client.query<{ seq: number }>(
              `INSERT INTO sheet_updates (sheet_id, seq, "update", user_id, created_at)
               SELECT $1, base.last + r.ord, r.data, r.user_id, $2
                 FROM unnest($3::bytea[], $4::text[]) WITH ORDINALITY AS r(data, user_id, ord),
                      (SELECT coalesce((SELECT max(seq) FROM sheet_updates WHERE sheet_id = $1),
                                       (SELECT upto_seq FROM sheet_states WHERE sheet_id = $1), 0) AS last) AS base
                ORDER BY r.ord
               RETURNING seq`,
              [sheetId, createdAt, part.map((i) => toBuffer(rows[i].update)), part.map((i) => rows[i].userId)],
            )
            const got = inserted.map((r) => Number(r.seq)).sort((a, b) => a - b)
            part.forEach((rowIndex, k) => (seqs[rowIndex] = got[k]))
          }
        }
      })
      return seqs
    },

    async compact(sheetId, state, prevUptoSeq, coveredSeqs): Promise<CompactOutcome> {
      if (coveredSeqs.length === 0) return { ok: true, uptoSeq: prevUptoSeq, deleted: 0 }
      let uptoSeq = prevUptoSeq
      for (const seq of coveredSeqs) if (seq > uptoSeq) uptoSeq = seq
      return inTransaction(async (client): Promise<CompactOutcome> => {
        const { rows: lock } = await client.query<{ ok: boolean }>('SELECT pg_try_advisory_xact_lock($1, hashtext($2)) AS ok', [COMPACT_LOCK, sheetId])
        if (!lock[0].ok) return { ok: false, reason: 'another instance is compacting this sheet', uptoSeq: prevUptoSeq }
        const { rows: current } = await client.query<{ upto_seq: number }>('SELECT upto_seq FROM sheet_states WHERE sheet_id = $1 FOR UPDATE', [sheetId])
        const currentUpto = Number(current[0]?.upto_seq ?? 0)
        if (currentUpto !== prevUptoSeq) return { ok: false, reason: `the state row moved to seq ${currentUpto} (expected ${prevUptoSeq})`, uptoSeq: currentUpto }
        const { rows: counted } = await client.query<{ n: string }>(
          'SELECT count(*) AS n FROM sheet_updates WHERE sheet_id = $1 AND seq > $2 AND seq <= $3',
          [sheetId, prevUptoSeq, uptoSeq],
        )
        const n = Number(counted[0].n)
        if (n !== coveredSeqs.length) return { ok: false, reason: `${n} rows up to seq ${uptoSeq}, ${coveredSeqs.length} known here`, uptoSeq: currentUpto }
        await client.query(
          `INSERT INTO sheet_states (sheet_id, state, upto_seq, updated_at) VALUES ($1, $2, $3, $4)
           ON CONFLICT (sheet_id) DO UPDATE SET state = excluded.state, upto_seq = excluded.upto_seq, updated_at = excluded.updated_at`,
          [sheetId, toBuffer(state), uptoSeq, Date.now()],
        )
        const deleted = await client.query('DELETE FROM sheet_updates WHERE sheet_id = $1 AND seq <= $2', [sheetId, uptoSeq])
        return { ok: true, uptoSeq, deleted: deleted.rowCount ?? 0 }
      })
    },
  }
}

function toBuffer(bytes: Uint8Array): Buffer {
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)
}
