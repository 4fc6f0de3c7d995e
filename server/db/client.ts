/**
 * Opens the database. SQLite (the default): a file in DATA_DIR, or ':memory:' in tests, with WAL and foreign keys on.
 * PostgreSQL (DATABASE_URL=postgres://…): a connection pool, migrated from drizzle/pg before use.
 *
 * Services see one handle type, `Db` (the SQLite one): on PostgreSQL the handle is Drizzle's node-postgres database
 * over the same tables (server/db/tables.ts picks them), so services only use what both drivers share — awaited
 * queries, `.returning()`, `transact` — and `isPostgres(db)` where SQL differs.
 */
import Database from 'better-sqlite3'
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3'
import { migrate } from 'drizzle-orm/better-sqlite3/migrator'
import { drizzle as drizzlePg, type NodePgDatabase } from 'drizzle-orm/node-postgres'
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator'
import pg from 'pg'
import { fileURLToPath } from 'node:url'
import path from 'node:path'
import * as schema from './schema'
import * as pgSchema from './schema.pg'
import { startCheckpoints } from './checkpoints'
import { DIALECT, type Dialect } from './dialect'

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database }
export interface DbHandle {
  dialect: 'sqlite'
  db: Db
  sqlite: Database.Database
  close(): void
}

/** Drizzle's own type of the PostgreSQL database (services see it as `Db`). */
export type PgDb = NodePgDatabase<typeof pgSchema> & { $client: pg.Pool }
export interface PgHandle {
  dialect: 'pg'
  /** The same database as `pgDb`, typed as services see it. */
  db: Db
  pgDb: PgDb
  pool: pg.Pool
  close(): Promise<void>
}

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..')
export const MIGRATIONS_FOLDER = path.join(ROOT, 'drizzle/sqlite')
export const PG_MIGRATIONS_FOLDER = path.join(ROOT, 'drizzle/pg')

export type Durability = 'NORMAL' | 'FULL'

export interface OpenOptions {
  /**
   * SQLite's `synchronous` setting under WAL. NORMAL (the default): a transaction that returned survives the server
   * process being killed (kill -9, crash) — the relayed-update guarantee — and costs no fsync per commit; the last
   * commits may roll back only if the whole machine loses power. FULL: an fsync per commit, so they survive power
   * loss too, at the price of the disk's flush time on every relayed edit. `PENUMBRA_SQLITE_SYNC=FULL` selects it.
   */
  durability?: Durability
  /**
   * Run WAL checkpoints in a worker thread instead of inside the commit that crosses SQLite's mark (checkpoints.ts).
   * The server's database turns it on; tests and scripts keep SQLite's own.
   */
  backgroundCheckpoints?: boolean
}

function durabilityFromEnv(): Durability {
  return (globalThis.process?.env?.PENUMBRA_SQLITE_SYNC ?? '').toUpperCase() === 'FULL' ? 'FULL' : 'NORMAL'
}

function checkDialect(wanted: Dialect): void {
  if (DIALECT !== wanted) {
    throw new Error(
      wanted === 'sqlite'
        ? 'DATABASE_URL selects PostgreSQL for this process, so a SQLite database cannot be opened in it (unset DATABASE_URL for SQLite)'
        : 'this process uses SQLite (DATABASE_URL is unset), so a PostgreSQL database cannot be opened in it',
    )
  }
}

export function openDb(file: string, options: OpenOptions = {}): DbHandle {
  checkDialect('sqlite')
  const sqlite = new Database(file)
  if (file !== ':memory:') sqlite.pragma('journal_mode = WAL')
  sqlite.pragma(`synchronous = ${options.durability ?? durabilityFromEnv()}`)
  sqlite.pragma('foreign_keys = ON')
  sqlite.pragma('busy_timeout = 5000')
  const db = drizzle(sqlite, { schema })
  migrate(db, { migrationsFolder: MIGRATIONS_FOLDER })
  const checkpoints = options.backgroundCheckpoints && file !== ':memory:' ? startCheckpoints(sqlite, file) : null
  return {
    dialect: 'sqlite',
    db,
    sqlite,
    close: () => {
      // the worker's connection closes on its own; the last connection to close folds the log into the file
      void checkpoints?.stop()
      sqlite.close()
    },
  }
}

/** 64-bit integers (millisecond times, counts) come back as numbers, as SQLite gives them; they stay below 2^53. */
const pgTypes: pg.CustomTypesConfig = {
  getTypeParser: ((oid: number, format?: 'text' | 'binary') =>
    oid === pg.types.builtins.INT8 && format !== 'binary' ? Number : pg.types.getTypeParser(oid, format)) as pg.CustomTypesConfig['getTypeParser'],
}

/** Any fixed number: the key of the advisory lock that keeps two starting servers from migrating at once. */
const MIGRATION_LOCK = 0x70656e75

export interface PgOpenOptions {
  /** Connections in the pool (default 10). */
  max?: number
  /** Skip migrating (the database is a copy of one already migrated). */
  migrate?: boolean
  log?: (message: string) => void
}

/** Opens PostgreSQL at `url`, migrates it (under an advisory lock, so several instances may start together). */
export async function openPgDb(url: string, options: PgOpenOptions = {}): Promise<PgHandle> {
  checkDialect('pg')
  const pool = new pg.Pool({ connectionString: url, max: options.max ?? 10, types: pgTypes })
  // an idle connection dropped by the server must not crash the process; the next query reconnects
  pool.on('error', (err) => (options.log ?? console.warn)(`database connection lost: ${err.message}`))
  try {
    if (options.migrate !== false) await migratePgDatabase(pool)
  } catch (err) {
    await pool.end()
    throw err
  }
  const pgDb = drizzlePg(pool, { schema: pgSchema })
  let closed: Promise<void> | null = null
  return {
    dialect: 'pg',
    db: pgDb as unknown as Db,
    pgDb,
    pool,
    close: () => (closed ??= pool.end()),
  }
}

/** Applies drizzle/pg to the pool's database, holding an advisory lock on one connection meanwhile. */
export async function migratePgDatabase(pool: pg.Pool): Promise<void> {
  const client = await pool.connect()
  try {
    await client.query('SELECT pg_advisory_lock($1)', [MIGRATION_LOCK])
    try {
      await migratePg(drizzlePg(client), { migrationsFolder: PG_MIGRATIONS_FOLDER })
    } finally {
      await client.query('SELECT pg_advisory_unlock($1)', [MIGRATION_LOCK])
    }
  } finally {
    client.release()
  }
}

/** Either handle. */
export type AnyDbHandle = DbHandle | PgHandle

/** Opens the process's database: PostgreSQL when DATABASE_URL names one, else SQLite in `sqliteFile`. */
export async function openConfiguredDb(sqliteFile: string, options: OpenOptions & PgOpenOptions = {}): Promise<AnyDbHandle> {
  return DIALECT === 'pg' ? openPgDb(process.env.DATABASE_URL as string, options) : openDb(sqliteFile, options)
}

/** True when the handle is PostgreSQL's (services branch on it where the SQL differs or a prepared statement is used). */
export function isPostgres(db: Db): boolean {
  return !(db.$client instanceof Database)
}
