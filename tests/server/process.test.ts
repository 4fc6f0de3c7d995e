/**
 * The real server process: `node --import tsx server/index.ts` on a fresh DATA_DIR seeds the demo, prints the URL and
 * the sign-ins, serves the API, refuses stray upgrades, closes on SIGTERM with exit code 0 (even with a live
 * websocket open), and keeps its secret and data for the next start.
 */
import { afterAll, describe, expect, it } from 'vitest'
import { spawn, type ChildProcess } from 'node:child_process'
import { mkdtempSync, rmSync, existsSync, statSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import WebSocket from 'ws'
import { DEMO_ACCOUNTS, EXAMPLES_DIR, readExamples } from '../../server/db/seed'
import { CSRF_HEADER } from '../../shared/schema/api'
import { emptyPgDatabase, ON_POSTGRES } from '../utils/db'

const ROOT = path.resolve(__dirname, '../..')
const dataDir = mkdtempSync(path.join(tmpdir(), 'penumbra-process-'))
const npmDataDir = mkdtempSync(path.join(tmpdir(), 'penumbra-process-npm-'))
const children: ChildProcess[] = []
const exampleCount = readExamples(EXAMPLES_DIR, () => {}).length

/** Under DATABASE_URL the server processes get an empty PostgreSQL database of their own, which they migrate and seed. */
const databaseUrl = ON_POSTGRES ? await emptyPgDatabase() : null

afterAll(() => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL')
  rmSync(dataDir, { recursive: true, force: true })
  rmSync(npmDataDir, { recursive: true, force: true })
})

interface Started {
  child: ChildProcess
  url: string
  output: () => string
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>
}

function start(via: 'node' | 'npm' = 'node', dir = dataDir): Promise<Started> {
  const [command, args] = via === 'node' ? [process.execPath, ['--import', 'tsx', 'server/index.ts']] : ['npm', ['run', '--silent', 'serve']]
  const child = spawn(command, args, {
    cwd: ROOT,
    env: { ...process.env, DATA_DIR: dir, PORT: '0', NODE_ENV: 'development', PENUMBRA_SECRET: '', ...(databaseUrl ? { DATABASE_URL: databaseUrl } : {}) },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  children.push(child)
  let out = ''
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()))
  child.stderr!.on('data', (d: Buffer) => (out += d.toString()))
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.on('exit', (code, signal) => resolve({ code, signal })))
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start in time:\n${out}`)), 30000)
    const onData = () => {
      const m = /Penumbra is running at (http:\/\/localhost:\d+)/.exec(out)
      if (m && /Mail sent while developing/.test(out)) {
        clearTimeout(timer)
        child.stdout!.off('data', onData)
        resolve({ child, url: m[1], output: () => out, exited })
      }
    }
    child.stdout!.on('data', onData)
    void exited.then(() => reject(new Error(`server exited before starting:\n${out}`)))
  })
}

async function signInDemoOwner(url: string): Promise<string> {
  const owner = DEMO_ACCOUNTS[0]
  const res = await fetch(`${url}/api/auth/sign-in`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: owner.email, password: owner.password }) })
  expect(res.status).toBe(200)
  return res.headers.get('set-cookie')!.split(';')[0]
}

describe('server/index.ts as a process', () => {
  it('starts on a fresh DATA_DIR with the demo lab, then exits 0 on SIGTERM with a live websocket open', async () => {
    const s = await start()
    expect(s.output()).toContain(`Seeded the demo lab with ${exampleCount} sheet(s).`)
    for (const a of DEMO_ACCOUNTS) expect(s.output()).toMatch(new RegExp(`${a.role}\\s+${a.name}\\s+${a.email.replace(/\./g, '\\.')}\\s+${a.password}`))
    // SQLite in DATA_DIR, unless DATABASE_URL names PostgreSQL
    expect(existsSync(path.join(dataDir, 'penumbra.sqlite'))).toBe(!ON_POSTGRES)
    expect(statSync(path.join(dataDir, 'session-secret')).mode & 0o077).toBe(0)

    const health = await fetch(`${s.url}/api/health`)
    expect(await health.json()).toMatchObject({ ok: true })
    // the demo guest link is printed and opens without a session
    const guestUrl = /Demo guest link \(a snapshot of Film H-17, no sign-in\): (\S+)/.exec(s.output())?.[1]
    expect(guestUrl).toMatch(new RegExp(`^${s.url}/guest/[A-Za-z0-9_-]{43}$`))
    const guest = await fetch(`${s.url}/api/guest/${guestUrl!.split('/').pop()}`)
    expect(guest.status).toBe(200)
    expect(((await guest.json()) as { authorName: string }).authorName).toBe('Tomás Reyes')
    const cookie = await signInDemoOwner(s.url)
    const labs = (await (await fetch(`${s.url}/api/labs`, { headers: { Cookie: cookie } })).json()) as { labs: { id: string; name: string; role: string; sheetCount: number }[] }
    expect(labs.labs).toEqual([expect.objectContaining({ name: 'Halvorsen Thin-Film Lab', role: 'owner', sheetCount: exampleCount })])
    const sheets = (await (await fetch(`${s.url}/api/labs/${labs.labs[0].id}/sheets`, { headers: { Cookie: cookie } })).json()) as { sheets: { id: string }[] }

    // a stray upgrade is refused; a collab upgrade with the session opens
    const stray = new WebSocket(`${s.url.replace('http', 'ws')}/elsewhere`)
    const strayResult = await new Promise<string>((resolve) => {
      stray.on('unexpected-response', (_req, res) => resolve(`status ${res.statusCode}`))
      stray.on('error', () => resolve('refused'))
      stray.on('open', () => resolve('open'))
    })
    expect(strayResult).not.toBe('open')
    const live = new WebSocket(`${s.url.replace('http', 'ws')}/collab/${sheets.sheets[0].id}`, { headers: { Cookie: cookie, Origin: s.url } })
    await new Promise<void>((resolve, reject) => {
      live.on('open', () => resolve())
      live.on('error', reject)
      live.on('unexpected-response', (_req, res) => reject(new Error(`collab upgrade answered ${res.statusCode}`)))
    })
    const liveClosed = new Promise<number>((resolve) => live.on('close', (code) => resolve(code)))

    s.child.kill('SIGTERM')
    const exit = await s.exited
    expect(exit).toEqual({ code: 0, signal: null })
    expect(s.output()).toContain('Penumbra stopped.')
    expect(await liveClosed).toBeGreaterThan(0)
  }, 60000)

  it('restarts on the same DATA_DIR without seeding again and keeps the secret (old sessions stay valid)', async () => {
    const first = await start()
    const cookie = await signInDemoOwner(first.url)
    first.child.kill('SIGINT')
    expect((await first.exited).code).toBe(0)

    const second = await start()
    expect(second.output()).not.toContain('Seeded the demo lab')
    const me = await fetch(`${second.url}/api/auth/me`, { headers: { Cookie: cookie } })
    expect(me.status).toBe(200)
    const created = await fetch(`${second.url}/api/labs`, { method: 'POST', headers: { Cookie: cookie, 'Content-Type': 'application/json', [CSRF_HEADER]: '1' }, body: JSON.stringify({ name: 'Kept lab' }) })
    expect(created.status).toBe(201)
    second.child.kill('SIGTERM')
    expect((await second.exited).code).toBe(0)
  }, 60000)

  it('npm run serve passes SIGTERM to the server itself, which stops cleanly (no server left running behind npm)', async () => {
    const s = await start('npm', npmDataDir)
    const health = await fetch(`${s.url}/api/health`)
    expect(health.status).toBe(200)
    s.child.kill('SIGTERM')
    expect((await s.exited).code).toBe(0)
    expect(s.output()).toContain('Penumbra stopped.')
    // nothing answers on the port any more
    await expect(fetch(`${s.url}/api/health`)).rejects.toThrow()
  }, 60000)
})
