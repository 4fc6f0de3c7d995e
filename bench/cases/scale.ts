/**
 * scale: 50 editors typing into one sheet, spread over 3 app instances, against the same 50 on one instance — both on
 * PostgreSQL and Redis, the instances being real `server/index.ts` processes (tests/scale/support/instances.ts). The
 * single instance on the embedded SQLite is measured too, for reference. Rounds alternate between the two layouts on
 * the same running instances, a fresh sheet per round, all on one seeded typing schedule (bench/typing.ts). Prints
 * p50 and p99 edit latency per layout and the ratio spread / one instance. Target: p99 ≤ 1.5×.
 *
 * Uses DATABASE_URL and REDIS_URL when set; otherwise starts a throwaway pair with scripts/scale-services.sh, and says
 * it is skipped when PostgreSQL or Redis is not installed.
 */
import { execFileSync } from 'node:child_process'
import { existsSync, mkdtempSync, rmSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { randomBytes, randomUUID } from 'node:crypto'
import { fileURLToPath } from 'node:url'
import Database from 'better-sqlite3'
import pg from 'pg'
import * as Y from 'yjs'
import { DEMO_ACCOUNTS } from '../../server/db/seed'
import { signSession } from '../../server/services/sessions'
import { printBench, printTarget } from '../harness'
import { percentile, seededRandom, typeRound, typingSheet, type TypingRound } from '../typing'
import { scratchDatabase, signIn, startInstance, type Instance } from '../../tests/scale/support/instances'

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..')
const EDITORS = 50
const UPDATES_PER_EDITOR = 20
const WARMUP_UPDATES = 3
const INTERVAL_MS = 200
const PAIRS = 4

interface Services {
  databaseUrl: string
  redisUrl: string
  stop(): void
}

function services(): Services | string {
  if (process.env.DATABASE_URL?.startsWith('postgres') && process.env.REDIS_URL)
    return { databaseUrl: process.env.DATABASE_URL, redisUrl: process.env.REDIS_URL, stop() {} }
  const dir = mkdtempSync(path.join(os.tmpdir(), 'penumbra-bench-scale-'))
  const env = { ...process.env, PENUMBRA_PG_PORT: '55471', PENUMBRA_REDIS_PORT: '56471' }
  const script = path.join(ROOT, 'scripts/scale-services.sh')
  try {
    const out = execFileSync('bash', [script, 'start', dir], { env, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] })
    const url = (name: string) => new RegExp(`${name}=(\\S+)`).exec(out)?.[1] ?? ''
    return {
      databaseUrl: url('DATABASE_URL'),
      redisUrl: url('REDIS_URL'),
      stop() {
        execFileSync('bash', [script, 'stop', dir], { env, stdio: 'ignore' })
        rmSync(dir, { recursive: true, force: true })
      },
    }
  } catch (err) {
    rmSync(dir, { recursive: true, force: true })
    return `no PostgreSQL and Redis to run on (${(err as { stderr?: string }).stderr?.trim() || String(err)})`
  }
}

/** Writes the benchmark's editors straight into the database the instances share (sessions are signed with its secret). */
interface Seeder {
  addEditors(labId: string, count: number): Promise<string[]>
  /** The document state the server stored for a sheet it created. */
  state(sheetId: string): Promise<Uint8Array>
  close(): Promise<void>
}

/** Plain SQL on either database, with PostgreSQL-style $n placeholders (SQLite gets `?` in the same order). */
interface Sql {
  run(text: string, params: unknown[]): Promise<unknown>
  rows<T>(text: string, params: unknown[]): Promise<T[]>
  close(): Promise<void>
}

function pgSql(url: string): Sql {
  const pool = new pg.Pool({ connectionString: url, max: 2 })
  return {
    run: (text, params) => pool.query(text, params),
    rows: async <T,>(text: string, params: unknown[]) => (await pool.query(text, params)).rows as T[],
    close: () => pool.end(),
  }
}

function sqliteSql(file: string): Sql {
  const db = new Database(file)
  db.pragma('busy_timeout = 5000')
  const prepare = (text: string) => db.prepare(text.replace(/\$\d+/g, '?'))
  return {
    run: async (text, params) => prepare(text).run(...params),
    rows: async <T,>(text: string, params: unknown[]) => prepare(text).all(...params) as T[],
    close: async () => void db.close(),
  }
}

function seeder(sql: Sql): Seeder {
  return {
    async addEditors(labId, count) {
      const ids: string[] = []
      const now = Date.now()
      for (let i = 0; i < count; i++) {
        const id = randomUUID()
        await sql.run('INSERT INTO users (id, email, name, password_hash, created_at) VALUES ($1, $2, $3, $4, $5)', [id, `typist${i}@halvorsen-lab.example`, `Typist ${i}`, 'bench', now])
        await sql.run('INSERT INTO memberships (lab_id, user_id, role, created_at) VALUES ($1, $2, $3, $4)', [labId, id, 'editor', now])
        ids.push(id)
      }
      return ids
    },
    async state(sheetId) {
      return docState(
        (await sql.rows<{ state: Buffer }>('SELECT state FROM sheet_states WHERE sheet_id = $1', [sheetId]))[0]?.state,
        (await sql.rows<{ update: Buffer }>('SELECT "update" FROM sheet_updates WHERE sheet_id = $1 ORDER BY seq', [sheetId])).map((r) => r.update),
      )
    },
    close: () => sql.close(),
  }
}

function docState(state: Buffer | undefined, updates: Buffer[]): Uint8Array {
  const doc = new Y.Doc()
  if (state) Y.applyUpdate(doc, new Uint8Array(state))
  for (const u of updates) Y.applyUpdate(doc, new Uint8Array(u))
  return Y.encodeStateAsUpdate(doc)
}

interface Setup {
  labId: string
  tokens: string[]
  newSheet(): Promise<{ sheetId: string; seed: Uint8Array }>
}

async function setUp(first: Instance, seeder: Seeder, secret: string): Promise<Setup> {
  const ownerAccount = DEMO_ACCOUNTS.find((a) => a.role === 'owner')!
  const owner = await signIn(first, ownerAccount.email, ownerAccount.password)
  const labId = (await owner.request<{ labs: { id: string }[] }>(first, 'GET', '/api/labs')).body.labs[0].id
  const ids = await seeder.addEditors(labId, EDITORS)
  const key = new TextEncoder().encode(secret)
  const tokens = await Promise.all(ids.map(async (id) => (await signSession(key, id)).token))
  let n = 0
  return {
    labId,
    tokens,
    async newSheet() {
      const res = await owner.request<{ id: string }>(first, 'POST', `/api/labs/${labId}/sheets`, typingSheet(EDITORS, `Fifty-hand edge model ${++n}`))
      if (res.status !== 201) throw new Error(`creating a sheet answered ${res.status}`)
      return { sheetId: res.body.id, seed: await seeder.state(res.body.id) }
    },
  }
}

function summary(rounds: TypingRound[]): { p50: number; p99: number; samples: number; missing: number } {
  const all = Float64Array.from(rounds.flatMap((r) => r.latencies)).sort()
  return { p50: percentile(all, 50), p99: percentile(all, 99), samples: all.length, missing: rounds.reduce((a, r) => a + r.missing, 0) }
}

export default async function scale(): Promise<void> {
  const svc = services()
  if (typeof svc === 'string') {
    console.log(`bench scale: skipped: ${svc}`)
    return
  }
  const secret = randomBytes(32).toString('base64url')
  const random = seededRandom(20261203)
  const offsets = Array.from({ length: EDITORS }, () => random() * INTERVAL_MS)
  const round = (setup: Setup, portOf: (i: number) => number) => async () => {
    const { sheetId, seed } = await setup.newSheet()
    return typeRound({ portOf, sheetId, tokens: setup.tokens, seed, offsets, updatesPerEditor: UPDATES_PER_EDITOR, intervalMs: INTERVAL_MS, warmupUpdates: WARMUP_UPDATES })
  }
  const instances: Instance[] = []
  const db = await scratchDatabase(svc.databaseUrl, 'pn_bench_scale')
  let sqliteDir: string | null = null
  try {
    // PostgreSQL and Redis: three instances, the first one migrating and seeding the empty database
    const options = { databaseUrl: db.url, redisUrl: svc.redisUrl, secret }
    instances.push(await startInstance('bench-a', options))
    instances.push(...(await Promise.all([startInstance('bench-b', options), startInstance('bench-c', options)])))
    const pgSeed = seeder(pgSql(db.url))
    const setup = await setUp(instances[0], pgSeed, secret)
    const one = round(setup, () => instances[0].port)
    const spread = round(setup, (i) => instances[i % 3].port)
    await one()
    await spread()
    const oneRounds: TypingRound[] = []
    const spreadRounds: TypingRound[] = []
    for (let pair = 0; pair < PAIRS; pair++) {
      if (pair % 2 === 0) {
        oneRounds.push(await one())
        spreadRounds.push(await spread())
      } else {
        spreadRounds.push(await spread())
        oneRounds.push(await one())
      }
    }
    await pgSeed.close()
    await Promise.all(instances.splice(0).map((i) => i.stop()))

    // the embedded default for reference: one instance on SQLite, no Redis
    sqliteDir = mkdtempSync(path.join(os.tmpdir(), 'penumbra-bench-scale-sqlite-'))
    const lone = await startInstance('bench-sqlite', { databaseUrl: '', redisUrl: '', secret, env: { DATA_DIR: sqliteDir } })
    instances.push(lone)
    const sqliteFile = path.join(sqliteDir, 'penumbra.sqlite')
    if (!existsSync(sqliteFile)) throw new Error(`the SQLite instance has no database at ${sqliteFile}`)
    const sqliteSeed = seeder(sqliteSql(sqliteFile))
    const sqliteSetup = await setUp(lone, sqliteSeed, secret)
    const sqliteRound = round(sqliteSetup, () => lone.port)
    await sqliteRound()
    const sqliteRounds = [await sqliteRound(), await sqliteRound()]
    await sqliteSeed.close()

    const a = summary(oneRounds)
    const b = summary(spreadRounds)
    const s = summary(sqliteRounds)
    const ratio = b.p99 / a.p99
    printBench('scale one instance p50 (PostgreSQL + Redis)', a.p50)
    printBench('scale one instance p99 (PostgreSQL + Redis)', a.p99)
    printBench('scale three instances p50', b.p50, b.p50 / a.p50, 'one instance')
    printBench('scale three instances p99', b.p99, ratio, 'one instance')
    console.log(`  ${EDITORS} editors, ${(EDITORS * 1000) / INTERVAL_MS} updates/s in all, ${PAIRS} rounds per layout; deliveries ${a.samples} / ${b.samples} (missing ${a.missing} / ${b.missing}); load average ${os.loadavg()[0].toFixed(1)}`)
    const roundP99 = (rounds: TypingRound[]) => rounds.map((r) => percentile(Float64Array.from(r.latencies).sort(), 99).toFixed(2)).join(', ')
    console.log(`  p99 per round (ms): one instance ${roundP99(oneRounds)}; three instances ${roundP99(spreadRounds)}`)
    console.log(`  for reference, one instance on the embedded SQLite without Redis: p50 ${s.p50.toFixed(2)} ms, p99 ${s.p99.toFixed(2)} ms (missing ${s.missing})`)
    printTarget('p99 over three instances ≤ 1.5× one instance, nothing missing', ratio <= 1.5 && a.missing === 0 && b.missing === 0)
  } finally {
    await Promise.all(instances.map((i) => i.stop()))
    await db.drop().catch(() => {})
    if (sqliteDir) rmSync(sqliteDir, { recursive: true, force: true })
    svc.stop()
  }
}
