/**
 * The collaboration store for the process's database: SQLite's (store.ts) on SQLite. On PostgreSQL, live documents
 * need a store of their own; until this build has one, opening a sheet live is refused with that reason (the REST API
 * and everything else work).
 */
import { isPostgres, type Db } from '../db/client'
import { createSqliteStore, type CollabStore } from './store'

export function defaultStore(db: Db): CollabStore {
  if (!isPostgres(db)) return createSqliteStore(db)
  const missing = (): never => {
    throw new Error('live editing on PostgreSQL needs the PostgreSQL collaboration store, which this build does not include')
  }
  return { loadDocument: missing, storeUpdates: missing, compact: missing }
}
