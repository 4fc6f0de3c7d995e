/**
 * Several Penumbra app processes on one PostgreSQL and one Redis, for the scale-out tests and benchmark: a fresh
 * database per run, app processes started from server/index.ts exactly as in production (DATABASE_URL, REDIS_URL,
 * one shared PENUMBRA_SECRET), sign-in through any instance, and the stored update log read back with plain SQL.
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { mkdtempSync, rmSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import pg from 'pg'
import * as Y from 'yjs'
import { SESSION_COOKIE } from '../../../server/services/sessions'
import { CSRF_HEADER } from '../../../shared/schema/api'

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..')

/** Why the scale-out tests cannot run here, or null when DATABASE_URL and REDIS_URL are both set. */
export function scaleSkipReason(env: NodeJS.ProcessEnv = process.env): string | null {
  const missing = [!env.DATABASE_URL?.startsWith('postgres') && 'DATABASE_URL=postgres://…', !env.REDIS_URL && 'REDIS_URL=redis://…'].filter(Boolean)
  if (missing.length === 0) return null
  return `the scale-out tests need ${missing.join(' and ')} (npm run test:scale; scripts/scale-services.sh starts both)`
}

/** The same server address with another database name. */
export function withDatabase(url: string, name: string): string {
  const u = new URL(url)
  u.pathname = `/${name}`
  return u.toString()
}

export interface ScratchDatabase {
  url: string
  name: string
  drop(): Promise<void>
}

/** An empty PostgreSQL database for one run (dropped afterwards, with any connection still open to it). */
export async function scratchDatabase(adminUrl: string, prefix = 'pn_scale'): Promise<ScratchDatabase> {
  const name = `${prefix}_${Date.now().toString(36)}_${randomBytes(3).toString('hex')}`
  const admin = new pg.Client({ connectionString: adminUrl })
  await admin.connect()
  try {
    await admin.query(`CREATE DATABASE ${name}`)
  } finally {
    await admin.end()
  }
  return {
    url: withDatabase(adminUrl, name),
    name,
    async drop() {
      const c = new pg.Client({ connectionString: adminUrl })
      await c.connect()
      try {
        await c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`)
      } finally {
        await c.end()
      }
    },
  }
}

export interface Instance {
  name: string
  port: number
  url: string
  /** ws://127.0.0.1:<port>/collab */
  base: string
  child: ChildProcess
  /** Everything the process printed (stdout and stderr). */
  output(): string
  /** SIGKILL, then wait for the exit. */
  kill9(): Promise<void>
  /** SIGTERM, then wait for the exit. */
  stop(): Promise<void>
}

export interface InstanceOptions {
  databaseUrl: string
  redisUrl: string
  secret: string
  /** 0: any free port. */
  port?: number
  env?: Record<string, string>
}

/** Starts `node server/index.ts` as one app instance; resolves once it prints the address it serves. */
export function startInstance(name: string, options: InstanceOptions): Promise<Instance> {
  const dataDir = mkdtempSync(path.join(os.tmpdir(), `penumbra-${name}-`))
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, 'server/index.ts')], {
    cwd: ROOT,
    env: {
      ...process.env,
      NODE_ENV: 'development',
      HOST: '127.0.0.1',
      PORT: String(options.port ?? 0),
      DATA_DIR: dataDir,
      PENUMBRA_SECRET: options.secret,
      DATABASE_URL: options.databaseUrl,
      REDIS_URL: options.redisUrl,
      ...options.env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  let out = ''
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()))
  void exited.then(() => rmSync(dataDir, { recursive: true, force: true }))
  return new Promise((resolve, reject) => {
    const onData = (d: Buffer) => {
      out += d.toString()
      const m = /Penumbra is running at http:\/\/localhost:(\d+)/.exec(out)
      if (m) {
        child.stdout!.off('data', onData)
        child.stdout!.on('data', (more: Buffer) => (out += more.toString()))
        const port = Number(m[1])
        resolve({
          name,
          port,
          url: `http://127.0.0.1:${port}`,
          base: `ws://127.0.0.1:${port}/collab`,
          child,
          output: () => out,
          async kill9() {
            if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL')
            await exited
          },
          async stop() {
            if (child.exitCode === null && child.signalCode === null) child.kill('SIGTERM')
            await exited
          },
        })
      }
    }
    child.stdout!.on('data', onData)
    child.stderr!.on('data', (d: Buffer) => (out += d.toString()))
    child.once('exit', (code, signal) => reject(new Error(`instance ${name} exited (${code ?? signal}) before serving:\n${out}`)))
  })
}

/** A signed-in person: the session token (valid on every instance) and JSON requests against any instance. */
export interface Session {
  token: string
  request<T = unknown>(instance: Pick<Instance, 'url'>, method: string, urlPath: string, body?: unknown): Promise<{ status: number; body: T }>
}

export async function signIn(instance: Pick<Instance, 'url'>, email: string, password: string): Promise<Session> {
  const res = await fetch(`${instance.url}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', [CSRF_HEADER]: '1' },
    body: JSON.stringify({ email, password }),
  })
  if (res.status !== 200) throw new Error(`sign-in as ${email} answered ${res.status}: ${await res.text()}`)
  const cookie = res.headers.getSetCookie().find((c) => c.startsWith(`${SESSION_COOKIE}=`))
  if (!cookie) throw new Error(`sign-in as ${email} set no session cookie`)
  const token = decodeURIComponent(cookie.slice(SESSION_COOKIE.length + 1).split(';')[0])
  return {
    token,
    async request(target, method, urlPath, body) {
      const r = await fetch(`${target.url}${urlPath}`, {
        method,
        headers: { cookie: `${SESSION_COOKIE}=${token}`, [CSRF_HEADER]: '1', ...(body === undefined ? {} : { 'content-type': 'application/json' }) },
        body: body === undefined ? undefined : JSON.stringify(body),
      })
      const text = await r.text()
      return { status: r.status, body: (text ? JSON.parse(text) : null) as never }
    },
  }
}

/** The document as PostgreSQL holds it: the compacted state, then every later row of the update log. */
export async function storedDocument(databaseUrl: string, sheetId: string): Promise<{ doc: Y.Doc; rows: number }> {
  const c = new pg.Client({ connectionString: databaseUrl })
  await c.connect()
  try {
    const state = await c.query<{ state: Buffer; upto_seq: number }>('SELECT state, upto_seq FROM sheet_states WHERE sheet_id = $1', [sheetId])
    const upto = state.rows[0]?.upto_seq ?? 0
    const rows = await c.query<{ update: Buffer }>('SELECT "update" FROM sheet_updates WHERE sheet_id = $1 AND seq > $2 ORDER BY seq', [sheetId, upto])
    const doc = new Y.Doc()
    doc.transact(() => {
      if (state.rows[0]) Y.applyUpdate(doc, new Uint8Array(state.rows[0].state))
      for (const r of rows.rows) Y.applyUpdate(doc, new Uint8Array(r.update))
    })
    return { doc, rows: rows.rowCount ?? 0 }
  } finally {
    await c.end()
  }
}
