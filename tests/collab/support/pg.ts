/**
 * A scratch PostgreSQL database for the collaboration store's tests, made on the server at DATABASE_URL and dropped
 * afterwards. Until the PostgreSQL schema's migrations are applied here, it holds the two collaboration tables only,
 * declared as the SQLite schema declares them.
 */
import { randomBytes } from 'node:crypto'
import pg from 'pg'

export const DATABASE_URL = process.env.DATABASE_URL ?? ''
/** Why the PostgreSQL tests are skipped, or null when they run. */
export const PG_SKIP = DATABASE_URL ? null : 'DATABASE_URL is not set: no PostgreSQL server to test the shared store against'

const COLLAB_TABLES = `
  CREATE TABLE sheet_updates (sheet_id text NOT NULL, seq integer NOT NULL, "update" bytea NOT NULL, user_id text, created_at bigint NOT NULL, PRIMARY KEY (sheet_id, seq));
  CREATE TABLE sheet_states (sheet_id text PRIMARY KEY, state bytea NOT NULL, upto_seq integer NOT NULL, updated_at bigint NOT NULL);
`

export interface ScratchDatabase {
  name: string
  url: string
  pool: pg.Pool
  /** Another pool on the database (a second app instance), ended by `drop()`. */
  openPool(): pg.Pool
  drop(): Promise<void>
}

/** A fresh database (name prefix from PENUMBRA_TEST_DB_PREFIX, default `penumbra_test_`) with the collaboration tables. */
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
  await pool.query(COLLAB_TABLES)
  return {
    name,
    url: url.toString(),
    pool,
    openPool,
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
