/**
 * A fresh PostgreSQL database for the collaboration store's tests (tests/utils/db.ts `freshPgDb`: migrated, dropped
 * afterwards), with more pools on it for the other app instances and a way to add sheets.
 */
import pg from 'pg'
import type { PgHandle } from '../../../server/db/client'
import { freshPgDb } from '../../utils/db'

/** Why the PostgreSQL tests are skipped, or null when they run. */
export const PG_SKIP = process.env.DATABASE_URL ? null : 'DATABASE_URL is not set: no PostgreSQL server to test the shared store against'

export interface ScratchDatabase {
  pool: pg.Pool
  /** Another pool on the database (a second app instance), ended by `drop()`. */
  openPool(): pg.Pool
  /** Adds a sheet row (and, the first time, the person and lab owning it). */
  addSheet(sheetId: string): Promise<void>
  drop(): Promise<void>
}

export async function scratchDatabase(): Promise<ScratchDatabase> {
  const handle = (await freshPgDb()) as PgHandle
  const { pool } = handle
  const url = (pool as unknown as { options: { connectionString: string } }).options.connectionString
  const others: pg.Pool[] = []
  let owned = false
  return {
    pool,
    openPool() {
      const other = new pg.Pool({ connectionString: url, max: 4 })
      // dropping the database ends its sessions; one that had not quite closed reports it here, after the pool's end
      other.on('error', () => {})
      others.push(other)
      return other
    },
    async addSheet(sheetId) {
      const now = Date.now()
      if (!owned) {
        owned = true
        await pool.query(`INSERT INTO users (id, email, name, password_hash, created_at) VALUES ('owner', 'mira@halvorsen-lab.example', 'Mira Halvorsen', 'not used', $1)`, [now])
        await pool.query(`INSERT INTO labs (id, name, created_by, created_at) VALUES ('lab', 'Halvorsen Thin-Film Lab', 'owner', $1)`, [now])
      }
      await pool.query(`INSERT INTO sheets (id, lab_id, title, created_by, created_at, updated_at) VALUES ($1, 'lab', 'Edge model of film B', 'owner', $2, $2)`, [sheetId, now])
    },
    async drop() {
      await Promise.all(others.splice(0).map((p) => p.end()))
      await handle.close()
    },
  }
}
