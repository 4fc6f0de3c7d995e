/**
 * A scratch PostgreSQL database for the collaboration store's tests, made on the server at DATABASE_URL and dropped
 * afterwards, migrated from drizzle/pg like a server's.
 */
import { randomBytes } from 'node:crypto'
import pg from 'pg'
import { migratePgDatabase } from '../../../server/db/client'

export const DATABASE_URL = process.env.DATABASE_URL ?? ''
/** Why the PostgreSQL tests are skipped, or null when they run. */
export const PG_SKIP = DATABASE_URL ? null : 'DATABASE_URL is not set: no PostgreSQL server to test the shared store against'

export interface ScratchDatabase {
  name: string
  url: string
  pool: pg.Pool
  /** Another pool on the database (a second app instance), ended by `drop()`. */
  openPool(): pg.Pool
  /** Adds a sheet row (and, the first time, the person and lab owning it). */
  addSheet(sheetId: string): Promise<void>
  drop(): Promise<void>
}

/** A fresh, migrated database (name prefix from PENUMBRA_TEST_DB_PREFIX, default `penumbra_test_`). */
export async function scratchDatabase(): Promise<ScratchDatabase> {
  const name = `${process.env.PENUMBRA_TEST_DB_PREFIX ?? 'penumbra_test_'}${randomBytes(6).toString('hex')}`
  const admin = new pg.Client({ connectionString: DATABASE_URL })
  await admin.connect()
  try {
    await admin.query(`CREATE DATABASE ${name}`)
  } finally {
    await admin.end()
  }
  const url = new URL(DATABASE_URL)
  url.pathname = `/${name}`
  const pools: pg.Pool[] = []
  const openPool = () => {
    const pool = new pg.Pool({ connectionString: url.toString(), max: 4 })
    pools.push(pool)
    return pool
  }
  const pool = openPool()
  await migratePgDatabase(pool)
  let owned = false
  return {
    name,
    url: url.toString(),
    pool,
    openPool,
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
      await Promise.all(pools.map((p) => p.end()))
      const again = new pg.Client({ connectionString: DATABASE_URL })
      await again.connect()
      try {
        await again.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`)
      } finally {
        await again.end()
      }
    },
  }
}
