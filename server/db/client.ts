/** Opens the SQLite database (a file in DATA_DIR, or ':memory:' in tests) with WAL and foreign keys on. */
import Database from 'better-sqlite3'
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3'
import { migrate } from 'drizzle-orm/better-sqlite3/migrator'
import { fileURLToPath } from 'node:url'
import path from 'node:path'
import * as schema from './schema'
import { startCheckpoints } from './checkpoints'

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database }
export interface DbHandle {
  db: Db
  sqlite: Database.Database
  close(): void
}

export const MIGRATIONS_FOLDER = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../drizzle')

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

export function openDb(file: string, options: OpenOptions = {}): DbHandle {
  const sqlite = new Database(file)
  if (file !== ':memory:') sqlite.pragma('journal_mode = WAL')
  sqlite.pragma(`synchronous = ${options.durability ?? durabilityFromEnv()}`)
  sqlite.pragma('foreign_keys = ON')
  sqlite.pragma('busy_timeout = 5000')
  const db = drizzle(sqlite, { schema })
  migrate(db, { migrationsFolder: MIGRATIONS_FOLDER })
  const checkpoints = options.backgroundCheckpoints && file !== ':memory:' ? startCheckpoints(sqlite, file) : null
  return {
    db,
    sqlite,
    close: () => {
      // the worker's connection closes on its own; the last connection to close folds the log into the file
      void checkpoints?.stop()
      sqlite.close()
    },
  }
}
