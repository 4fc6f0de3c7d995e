/**
 * One way to run several statements atomically on either database. PostgreSQL: Drizzle's `db.transaction` (the
 * callback's queries must use the `tx` it is given: another pool connection is outside the transaction). SQLite:
 * better-sqlite3 takes no async callback, so BEGIN IMMEDIATE / COMMIT / ROLLBACK wrap it on the one connection,
 * one transaction at a time per connection (an in-process queue). Inside the callback await only database queries:
 * hash passwords, evaluate and read files before it. A `transact` on a `tx` runs inside the outer transaction.
 */
import type { Db, PgDb } from './client'
import { isPostgres } from './client'
import { sql } from 'drizzle-orm'

const INSIDE = Symbol('penumbra.transaction')
type TxDb = Db & { [INSIDE]?: true }

/** The tail of each SQLite connection's queue of transactions. */
const queues = new WeakMap<object, Promise<void>>()

export async function transact<T>(db: Db, fn: (tx: Db) => Promise<T>): Promise<T> {
  if ((db as TxDb)[INSIDE]) return fn(db)
  if (isPostgres(db)) return (db as unknown as PgDb).transaction((tx) => fn(tx as unknown as Db))
  const client = db.$client
  const before = queues.get(client) ?? Promise.resolve()
  let release!: () => void
  const mine = new Promise<void>((resolve) => (release = resolve))
  queues.set(client, mine)
  await before
  try {
    // the same handle, marked so nested calls join this transaction (its prototype is the database itself)
    const tx = Object.create(db, { [INSIDE]: { value: true } }) as Db
    client.exec('BEGIN IMMEDIATE')
    try {
      const result = await fn(tx)
      client.exec('COMMIT')
      return result
    } catch (err) {
      if (client.inTransaction) client.exec('ROLLBACK')
      throw err
    }
  } finally {
    if (queues.get(client) === mine) queues.delete(client)
    release()
  }
}

/**
 * Inside a `transact` callback: holds a lock named `key` until the transaction ends, so checks that read several
 * rows before writing (a lab keeps at least one owner) cannot interleave with the same check elsewhere. PostgreSQL:
 * a transaction-level advisory lock (other instances wait for it). SQLite: nothing to do, BEGIN IMMEDIATE already
 * admits one writer at a time.
 */
export async function lockFor(tx: Db, key: string): Promise<void> {
  if (isPostgres(tx)) await (tx as unknown as PgDb).execute(sql`SELECT pg_advisory_xact_lock(hashtext(${key}))`)
}
