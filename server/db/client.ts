/** Opens the SQLite database (a file in DATA_DIR, or ':memory:' in tests) with WAL and foreign keys on. */
import Database from 'better-sqlite3'
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3'
import { migrate } from 'drizzle-orm/better-sqlite3/migrator'
import { fileURLToPath } from 'node:url'
import path from 'node:path'
import * as schema from './schema'

export type Db = BetterSQLite3Database<typeof schema>
export interface DbHandle {
  db: Db
  sqlite: Database.Database
  close(): void
}

export const MIGRATIONS_FOLDER = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../drizzle')

export function openDb(file: string): DbHandle {
  const sqlite = new Database(file)
  if (file !== ':memory:') sqlite.pragma('journal_mode = WAL')
  // FULL: a write that returned is on disk even if the machine loses power, not only if the process dies.
  sqlite.pragma('synchronous = FULL')
  sqlite.pragma('foreign_keys = ON')
  sqlite.pragma('busy_timeout = 5000')
  const db = drizzle(sqlite, { schema })
  migrate(db, { migrationsFolder: MIGRATIONS_FOLDER })
  return { db, sqlite, close: () => sqlite.close() }
}
