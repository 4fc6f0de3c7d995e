/**
 * A fresh database for each test app. Without DATABASE_URL: SQLite in memory (or in the given file). With
 * DATABASE_URL=postgres://… (`npm run test:scale`): a new PostgreSQL database copied from a template that was
 * migrated once (CREATE DATABASE … TEMPLATE …, a few milliseconds), dropped again when the handle closes or the test
 * file ends. Database names start with PENUMBRA_TEST_DB_PREFIX (default `penumbra_test_`).
 */
import { createHash, randomBytes } from 'node:crypto'
import { readFileSync, readdirSync } from 'node:fs'
import path from 'node:path'
import pg from 'pg'
import { afterAll } from 'vitest'
import { migratePgDatabase, openDb, openPgDb, PG_MIGRATIONS_FOLDER, type AnyDbHandle, type DbHandle } from '../../server/db/client'
import { DIALECT } from '../../server/db/dialect'

export const ON_POSTGRES = DIALECT === 'pg'
/** Why a test about SQLite itself does not run under PostgreSQL (for `it.skipIf(ON_POSTGRES)`). */
export const SQLITE_ONLY = 'about the embedded SQLite database; DATABASE_URL selects PostgreSQL'

/** A SQLite-only suite's title: under PostgreSQL it says why it is skipped. */
export function sqliteOnly(title: string): string {
  return ON_POSTGRES ? `${title} (skipped: ${SQLITE_ONLY})` : title
}

const PREFIX = (process.env.PENUMBRA_TEST_DB_PREFIX ?? 'penumbra_test_').toLowerCase().replace(/[^a-z0-9_]/g, '_')

function urlFor(database: string): string {
  const url = new URL(process.env.DATABASE_URL as string)
  url.pathname = `/${database}`
  return url.toString()
}

let admin: pg.Pool | null = null
function adminPool(): pg.Pool {
  admin ??= new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 2, allowExitOnIdle: true })
  return admin
}

/** The template's name changes with the migrations, so a changed schema never reuses an old template. */
function templateName(): string {
  const hash = createHash('sha256')
  for (const name of readdirSync(PG_MIGRATIONS_FOLDER).filter((f) => f.endsWith('.sql')).sort()) hash.update(readFileSync(path.join(PG_MIGRATIONS_FOLDER, name)))
  return `${PREFIX}template_${hash.digest('hex').slice(0, 12)}`
}

let template: Promise<string> | null = null

/** Creates and migrates the template once (several test processes may race: an advisory lock orders them). */
function ensureTemplate(): Promise<string> {
  template ??= (async () => {
    const name = templateName()
    const client = await adminPool().connect()
    try {
      await client.query('SELECT pg_advisory_lock(hashtext($1))', [name])
      const found = await client.query('SELECT 1 FROM pg_database WHERE datname = $1', [name])
      if (found.rowCount === 0) {
        const building = `${name}_building`
        await client.query(`DROP DATABASE IF EXISTS ${building} WITH (FORCE)`)
        await client.query(`CREATE DATABASE ${building} TEMPLATE template0 ENCODING 'UTF8' LC_COLLATE 'C' LC_CTYPE 'C'`)
        const pool = new pg.Pool({ connectionString: urlFor(building), max: 1 })
        try {
          await migratePgDatabase(pool)
        } finally {
          await pool.end()
        }
        await client.query(`ALTER DATABASE ${building} RENAME TO ${name}`)
      }
      await client.query('SELECT pg_advisory_unlock(hashtext($1))', [name])
    } finally {
      client.release()
    }
    return name
  })()
  return template
}

const open = new Set<AnyDbHandle>()

/** A new, migrated, empty PostgreSQL database; closing the handle drops it. */
export async function freshPgDb(): Promise<AnyDbHandle> {
  const source = await ensureTemplate()
  const name = `${PREFIX}${process.pid}_${randomBytes(6).toString('hex')}`
  await adminPool().query(`CREATE DATABASE ${name} TEMPLATE ${source}`)
  // dropping the database ends any connection still open: not worth a warning here
  const handle = await openPgDb(urlFor(name), { migrate: false, max: 4, log: () => {} })
  const closePool = handle.close
  let dropped: Promise<void> | null = null
  handle.close = () =>
    (dropped ??= (async () => {
      open.delete(handle)
      await closePool()
      await adminPool().query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`)
    })())
  open.add(handle)
  return handle
}

const dropLater = new Set<string>()

/** A new, empty PostgreSQL database (not migrated: for a server process to migrate and seed), dropped when the file ends. */
export async function emptyPgDatabase(): Promise<string> {
  const name = `${PREFIX}${process.pid}_${randomBytes(6).toString('hex')}`
  await adminPool().query(`CREATE DATABASE ${name} TEMPLATE template0 ENCODING 'UTF8' LC_COLLATE 'C' LC_CTYPE 'C'`)
  dropLater.add(name)
  return urlFor(name)
}

/** The test database: SQLite (`file`, in memory by default) or, under DATABASE_URL, a fresh PostgreSQL database. */
export async function openTestDb(file = ':memory:'): Promise<AnyDbHandle> {
  return ON_POSTGRES ? freshPgDb() : openDb(file)
}

/** SQLite only: a test about the embedded database itself. */
export function openSqliteDb(file = ':memory:'): DbHandle {
  return openDb(file)
}

async function dropAll(): Promise<void> {
  await Promise.all([...open].map(async (h) => h.close()))
  for (const name of dropLater) await adminPool().query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`)
  dropLater.clear()
}

// whatever a test file left open is dropped when it ends (a helper process a test starts imports this outside any
// test file: nothing to register there)
try {
  afterAll(dropAll)
} catch {
  // not inside a test file
}
