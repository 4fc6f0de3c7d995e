/**
 * collab-latency: 50 editors on one sheet, each typing into their own formula, through
 *   - the real collaboration server (cookie-checked upgrade, decoding and role checks, write-before-relay into SQLite
 *     with WAL and the default durability — synchronous NORMAL, safe against a killed process — compaction), and
 *   - a bare relay (the @y/websocket-server utilities: no auth, no persistence),
 * each in its own child process: one unmeasured warm-up round of each, then five alternating pairs of rounds in the same
 * run, all on one seeded typing schedule. Latency is measured per (update, receiving editor) pair from the send to its
 * arrival; p50, p99 (pooled over the measured rounds) and the ratio real / bare are printed, with each round's p99.
 * Target: p99 ≤ 1.25× bare. COLLAB_BENCH_PROFILE=<dir> writes a CPU profile of every child server there.
 * Loopback only; every loop is bounded (50 editors × 30 updates per round).
 *
 * The same file is the child server when started with COLLAB_BENCH_SERVER=real|bare.
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import http from 'node:http'
import type { AddressInfo } from 'node:net'
import os from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { randomUUID } from 'node:crypto'
import { WebSocketServer } from 'ws'
import * as Y from 'yjs'
import { openDb } from '../../server/db/client'
import { labs, memberships, sheets, users } from '../../server/db/schema'
import { signSession } from '../../server/services/sessions'
import { seedDocument } from '../../server/services/documents'
import { createCollab } from '../../server/collab/index'
import { printBench, printTarget } from '../harness'
import { percentile, seededRandom, typeRound, typingSheet } from '../typing'

const EDITORS = 50
const UPDATES_PER_EDITOR = 30
const WARMUP_UPDATES = 5
const INTERVAL_MS = 200
/** Rounds per server (each a fresh child process). */
const PAIRS = 5
const SECRET_HEX = '70656e756d6272612d62656e63682d7365637265742d30313233343536373839'

export interface LatencySummary {
  p50: number
  p99: number
  samples: number
  missing: number
  /** Server CPU (user + system) per 1,000 updates relayed to 49 editors each. */
  cpuMsPer1000Updates: number
}

export interface LatencyReport {
  editors: number
  updatesPerSecond: number
  bare: LatencySummary
  real: LatencySummary
  /** The real server with synchronous = FULL (an fsync per commit, safe against power loss too), for reference. */
  realWithFsync: LatencySummary
  ratioP50: number
  ratioP99: number
  /** Median single-row commit (WAL, synchronous FULL) on the benchmark's disk, measured in the same run. */
  commitMs: number
  targetMet: boolean
}

/** Median time of one single-row commit with WAL and synchronous FULL on this disk (200 commits): the fsync floor. */
function commitMs(file: string): number {
  const probe = openDb(file, { durability: 'FULL' })
  try {
    probe.sqlite.exec('CREATE TABLE probe (x BLOB)')
    const insert = probe.sqlite.prepare('INSERT INTO probe VALUES (?)')
    const blob = Buffer.alloc(40)
    const times: number[] = []
    for (let i = 0; i < 200; i++) {
      const t0 = performance.now()
      insert.run(blob)
      times.push(performance.now() - t0)
    }
    return times.sort((a, b) => a - b)[100]
  } finally {
    probe.close()
  }
}

/** mulberry32: a small seeded generator, so every run types on the same schedule. */
// ---------------------------------------------------------------------------------------------- child servers ---

async function runChildServer(kind: string): Promise<void> {
  const server = http.createServer((_req, res) => res.writeHead(404).end())
  if (kind === 'real' || kind === 'real-full') {
    // Informational variant 'real-full': an fsync per commit (PENUMBRA_SQLITE_SYNC=FULL), to show what it costs.
    // as the server opens its database (server/index.ts)
    const handle = openDb(process.env.COLLAB_BENCH_DB!, { durability: kind === 'real-full' ? 'FULL' : 'NORMAL', backgroundCheckpoints: true })
    const collab = createCollab({ db: handle.db, secret: Buffer.from(SECRET_HEX, 'hex'), log: () => {} })
    server.on('upgrade', (req, socket, head) => void collab.handleUpgrade(req, socket, head))
    process.on('SIGTERM', () => {
      reportCpu()
      void collab.close().then(() => process.exit(0))
    })
  } else {
    const utils = await import('@y/websocket-server/utils')
    const seed = new Uint8Array(readFileSync(process.env.COLLAB_BENCH_SEED!))
    utils.setContentInitializor(async (doc) => Y.applyUpdate(doc, seed))
    const wss = new WebSocketServer({ noServer: true })
    server.on('upgrade', (req, socket, head) => {
      const docName = (req.url ?? '').split('?')[0].split('/').pop() ?? ''
      wss.handleUpgrade(req, socket, head, (ws) => utils.setupWSConnection(ws, req, { docName, gc: true }))
    })
    process.on('SIGTERM', () => {
      reportCpu()
      process.exit(0)
    })
  }
  let cpuAtStart = process.cpuUsage()
  // CPU spent from listening to the stop signal: the cost of serving the round, startup excluded.
  const reportCpu = () => {
    const used = process.cpuUsage(cpuAtStart)
    process.stdout.write(`cpu ${(used.user + used.system) / 1000}\n`)
  }
  server.listen(0, '127.0.0.1', () => {
    cpuAtStart = process.cpuUsage()
    process.stdout.write(`listening ${(server.address() as AddressInfo).port}\n`)
  })
}

interface Child {
  child: ChildProcess
  port: number
  /** Resolves with the CPU milliseconds the server reported when stopped. */
  cpuMs: Promise<number>
}

function startChild(kind: Kind, env: Record<string, string>): Promise<Child> {
  const self = fileURLToPath(import.meta.url)
  // A V8 CPU profile of each child server when asked for (open it in Chrome's DevTools).
  const profile = process.env.COLLAB_BENCH_PROFILE ? ['--cpu-prof', `--cpu-prof-dir=${process.env.COLLAB_BENCH_PROFILE}`] : []
  const child = spawn(process.execPath, [...profile, '--import', 'tsx', self], {
    env: { ...process.env, ...env, COLLAB_BENCH_SERVER: kind },
    stdio: ['ignore', 'pipe', 'inherit'],
  })
  let out = ''
  let cpuResolve: (ms: number) => void = () => {}
  const cpuMs = new Promise<number>((resolve) => (cpuResolve = resolve))
  child.on('exit', () => cpuResolve(NaN))
  return new Promise((resolve, reject) => {
    let listening = false
    child.stdout!.on('data', (d: Buffer) => {
      out += d.toString()
      const m = /listening (\d+)/.exec(out)
      if (m && !listening) {
        listening = true
        resolve({ child, port: Number(m[1]), cpuMs })
      }
      const c = /cpu ([\d.]+)/.exec(out)
      if (c) cpuResolve(Number(c[1]))
    })
    child.on('exit', (code) => {
      if (!listening) reject(new Error(`${kind} server exited with ${code}`))
    })
  })
}

async function stopChild(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return
  const done = new Promise<void>((resolve) => child.once('exit', () => resolve()))
  child.kill('SIGTERM')
  const timer = setTimeout(() => child.kill('SIGKILL'), 5000)
  await done
  clearTimeout(timer)
}

// ---------------------------------------------------------------------------------------------------- editors ---

type Kind = 'real' | 'bare' | 'real-full'

interface Round {
  latencies: number[]
  missing: number
  cpuMs: number
}

async function runRound(kind: Kind, env: Record<string, string>, sheetId: string, tokens: string[], seed: Uint8Array, offsets: readonly number[]): Promise<Round> {
  const { child, port, cpuMs } = await startChild(kind, env)
  const round = await typeRound({ portOf: () => port, sheetId, tokens, seed, offsets, updatesPerEditor: UPDATES_PER_EDITOR, intervalMs: INTERVAL_MS, warmupUpdates: WARMUP_UPDATES })
  await stopChild(child)
  return { ...round, cpuMs: await cpuMs }
}

function summarise(rounds: Round[]): LatencySummary {
  const all = Float64Array.from(rounds.flatMap((r) => r.latencies)).sort()
  const updates = rounds.length * EDITORS * UPDATES_PER_EDITOR
  return {
    p50: percentile(all, 50),
    p99: percentile(all, 99),
    samples: all.length,
    missing: rounds.reduce((a, r) => a + r.missing, 0),
    cpuMsPer1000Updates: (rounds.reduce((a, r) => a + r.cpuMs, 0) / updates) * 1000,
  }
}

export default async function collabLatency(): Promise<LatencyReport> {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'penumbra-bench-latency-'))
  try {
    const dbFile = path.join(dir, 'bench.db')
    const seedFile = path.join(dir, 'seed.bin')
    const file = typingSheet(EDITORS)
    const handle = openDb(dbFile)
    const now = Date.now()
    const secret = Buffer.from(SECRET_HEX, 'hex')
    const labId = randomUUID()
    const sheetIds = Array.from({ length: PAIRS + 2 }, () => randomUUID())
    const sheetId = sheetIds[0]
    const tokens: string[] = []
    for (let i = 0; i < EDITORS; i++) {
      const id = randomUUID()
      handle.db.insert(users).values({ id, email: `editor${i}@halvorsen-lab.example`, name: `Editor ${i}`, passwordHash: 'bench', createdAt: now }).run()
      if (i === 0) handle.db.insert(labs).values({ id: labId, name: 'Halvorsen Thin-Film Lab', createdBy: id, createdAt: now }).run()
      handle.db.insert(memberships).values({ labId, userId: id, role: i === 0 ? 'owner' : 'editor', createdAt: now }).run()
      if (i === 0)
        for (const sid of sheetIds) handle.db.insert(sheets).values({ id: sid, labId, title: file.title, createdBy: id, createdAt: now, updatedAt: now }).run()
      tokens.push((await signSession(secret, id)).token)
    }
    // One fresh sheet per round of the real server, so no round inherits another's history — all with the very same
    // seeded state (a second seeding would create the cells anew under another client id).
    await seedDocument(handle.db, sheetIds[0], file)
    for (const sid of sheetIds.slice(1))
      handle.sqlite.prepare('INSERT INTO sheet_states (sheet_id, state, upto_seq, updated_at) SELECT ?, state, 0, updated_at FROM sheet_states WHERE sheet_id = ?').run(sid, sheetIds[0])
    handle.close()
    // Both servers start from byte-identical document state: the state row the seed wrote.
    const check = openDb(dbFile)
    const stored = check.sqlite.prepare('SELECT state FROM sheet_states WHERE sheet_id = ?').get(sheetId) as { state: Buffer }
    check.close()
    writeFileSync(seedFile, stored.state)
    const seedBytes = new Uint8Array(stored.state)

    const fsyncMs = commitMs(path.join(dir, 'probe.db'))
    const env = { COLLAB_BENCH_DB: dbFile, COLLAB_BENCH_SEED: seedFile }
    const bare: Round[] = []
    const real: Round[] = []
    const full: Round[] = []
    // Every round types on the same schedule (each editor's start offset within the first interval, from a seeded
    // generator), and the pairs alternate which server goes first, so a slow spell of the machine falls on both.
    const random = seededRandom(20261202)
    const offsets = Array.from({ length: EDITORS }, () => random() * INTERVAL_MS)
    // One unmeasured round of each first: the first round of a run pays for cold caches, JIT and a growing database file.
    await runRound('bare', env, sheetId, tokens, seedBytes, offsets)
    await runRound('real', env, sheetIds[PAIRS + 1], tokens, seedBytes, offsets)
    for (let pair = 0; pair < PAIRS; pair++) {
      const runBare = async () => bare.push(await runRound('bare', env, sheetId, tokens, seedBytes, offsets))
      const runReal = async () => real.push(await runRound('real', env, sheetIds[pair], tokens, seedBytes, offsets))
      if (pair % 2 === 0) await runBare().then(runReal)
      else await runReal().then(runBare)
    }
    full.push(await runRound('real-full', env, sheetIds[PAIRS], tokens, seedBytes, offsets))
    const b = summarise(bare)
    const r = summarise(real)
    const n = summarise(full)
    const report: LatencyReport = {
      editors: EDITORS,
      updatesPerSecond: (EDITORS * 1000) / INTERVAL_MS,
      bare: b,
      real: r,
      realWithFsync: n,
      ratioP50: r.p50 / b.p50,
      ratioP99: r.p99 / b.p99,
      commitMs: fsyncMs,
      targetMet: r.p99 <= 1.25 * b.p99 && r.missing === 0,
    }
    const ms = (x: number) => `${x.toFixed(2)} ms`
    printBench('collab-latency bare relay p50', b.p50)
    printBench('collab-latency bare relay p99', b.p99)
    printBench('collab-latency p50', r.p50)
    printBench('collab-latency p99', r.p99)
    console.log(
      `  ${EDITORS} editors, ${report.updatesPerSecond} updates/s in all, ${r.samples} deliveries per server (missing: bare ${b.missing}, Penumbra ${r.missing}); ` +
        `load average ${os.loadavg()[0].toFixed(1)}; one synchronous commit ${fsyncMs.toFixed(2)} ms`,
    )
    const roundP99 = (rounds: Round[]) => rounds.map((r) => percentile(Float64Array.from(r.latencies).sort(), 99).toFixed(2)).join(', ')
    console.log(`  p99 per round (ms): bare ${roundP99(bare)}; Penumbra ${roundP99(real)}`)
    console.log(`  server CPU per 1000 updates: bare ${b.cpuMsPer1000Updates.toFixed(0)} ms, Penumbra ${r.cpuMsPer1000Updates.toFixed(0)} ms`)
    console.log(`  Penumbra with an fsync per commit (PENUMBRA_SQLITE_SYNC=FULL), for reference: p50 ${ms(n.p50)}, p99 ${ms(n.p99)}`)
    console.log(`  ratio to the bare relay: p50 ${report.ratioP50.toFixed(2)}x, p99 ${report.ratioP99.toFixed(2)}x`)
    printTarget('p99 ≤ 1.25× the bare relay, nothing missing', report.targetMet)
    return report
  } finally {
    rmSync(dir, { recursive: true, force: true })
  }
}

if (process.env.COLLAB_BENCH_SERVER) await runChildServer(process.env.COLLAB_BENCH_SERVER)
else if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) await collabLatency()
