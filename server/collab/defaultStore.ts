/**
 * The collaboration store for the process's database: SQLite's (store.ts) on SQLite, PostgreSQL's (store.pg.ts, raw
 * SQL over the handle's own pool) on PostgreSQL.
 */
import { isPostgres, type Db, type PgDb } from '../db/client'
import { createSqliteStore, type CollabStore, type SqliteStoreOptions } from './store'
import { createPgStore } from './store.pg'

export function defaultStore(db: Db, sqliteOptions: SqliteStoreOptions = {}): CollabStore {
  if (!isPostgres(db)) return createSqliteStore(db, sqliteOptions)
  return createPgStore((db as unknown as PgDb).$client)
}
