/**
 * Browser-test factories: the real server as a child process on a fresh data directory, and headless Debian
 * Chromium through playwright-core (STACK pitfall 9: never download browsers; a persistent context in a fresh
 * directory per browser, so every browser is an independent person with its own cookies).
 *
 * Typical use, once per test file:
 *
 *   const e2e = useBrowserSuite()
 *   it('…', async () => {
 *     const owner = await e2e.newBrowser()
 *     await signIn(owner.page, e2e.server.url, DEMO.owner)
 *   })
 *
 * `useBrowserSuite` registers the hooks: it starts the server before the tests, saves a screenshot of every open
 * page to test-results/ when a test fails (with the page's console errors), and closes every browser and stops the
 * server afterwards.
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { chromium, type BrowserContext, type Page } from 'playwright-core'
import { afterAll, beforeAll, beforeEach } from 'vitest'
import { devMailReply, type DevMail } from '../../shared/schema/api'

export type { DevMail }

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..')
export const RESULTS_DIR = path.join(ROOT, 'test-results')
export const CHROMIUM = '/usr/bin/chromium'
export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
]

/** The demo sign-ins of the seed (fictional people; team contract). */
export const DEMO = {
  owner: { name: 'Mira Halvorsen', email: 'mira@halvorsen-lab.example', password: 'demo-owner-2026' },
  editor: { name: 'Tomás Reyes', email: 'tomas@halvorsen-lab.example', password: 'demo-editor-2026' },
  reviewer: { name: 'Anil Varma', email: 'anil@varma-group.example', password: 'demo-reviewer-2026' },
  viewer: { name: 'Lena Fischer', email: 'lena@halvorsen-lab.example', password: 'demo-viewer-2026' },
} as const
export const DEMO_LAB = 'Halvorsen Thin-Film Lab'

export interface RunningServer {
  /** Base URL without a trailing slash, e.g. `http://localhost:41234`. */
  url: string
  port: number
  dataDir: string
  /** Everything the server printed so far (stdout and stderr). */
  output(): string
  /**
   * Stops the server (SIGTERM, or SIGKILL when `hard`) and keeps its data directory, so `start()` brings it back on
   * the same port with everything it stored: for tests of what people see while the server is away.
   */
  halt(options?: { hard?: boolean }): Promise<void>
  /** Starts a halted server again (same port, same data directory) and resolves once it is running. */
  start(): Promise<void>
  /** SIGTERM, then SIGKILL after a grace period; removes the data directory. */
  stop(): Promise<void>
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer()
    probe.unref()
    probe.on('error', reject)
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address()
      const port = typeof address === 'object' && address ? address.port : 0
      probe.close(() => resolve(port))
    })
  })
}

function waitForExit(child: ChildProcess, ms: number): Promise<boolean> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve(true)
  return new Promise((resolve) => {
    const timer = setTimeout(() => resolve(false), ms)
    child.once('exit', () => {
      clearTimeout(timer)
      resolve(true)
    })
  })
}

/**
 * Starts `node --import tsx server/index.ts` with NODE_ENV=test, a free port and a fresh temporary DATA_DIR, and
 * resolves once it prints `Penumbra is running at http://localhost:<port>`. The built client (dist/) must exist.
 */
export async function startServer(options: { env?: Record<string, string>; timeoutMs?: number } = {}): Promise<RunningServer> {
  if (!existsSync(path.join(ROOT, 'dist', 'index.html')))
    throw new Error('dist/index.html is missing: build the client first (npm run test:e2e runs `vite build` before the tests)')
  const port = await freePort()
  const dataDir = mkdtempSync(path.join(tmpdir(), 'penumbra-e2e-data-'))
  let log = ''
  const append = (chunk: Buffer) => {
    log += chunk.toString()
    if (log.length > 200_000) log = log.slice(-100_000)
  }
  let child: ChildProcess | null = null

  /** Spawns the server and resolves with its URL once it says it is running. */
  const launch = (): Promise<string> => {
    const proc = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], {
      cwd: ROOT,
      env: { ...process.env, NODE_ENV: 'test', PORT: String(port), DATA_DIR: dataDir, ...options.env },
      stdio: ['ignore', 'pipe', 'pipe'],
    })
    child = proc
    const from = log.length
    proc.stdout!.on('data', append)
    proc.stderr!.on('data', append)
    return new Promise<string>((resolve, reject) => {
      const timeoutMs = options.timeoutMs ?? 60_000
      const timer = setTimeout(() => {
        cleanup()
        reject(new Error(`the server did not report that it is running within ${timeoutMs} ms; it printed:\n${log.slice(from)}`))
      }, timeoutMs)
      const onData = () => {
        const match = /Penumbra is running at (http:\/\/localhost:(\d+))/.exec(log.slice(from))
        if (match) {
          cleanup()
          resolve(match[1]!)
        }
      }
      const onExit = (code: number | null, signal: string | null) => {
        cleanup()
        reject(new Error(`the server exited (code ${code}, signal ${signal}) before it was running; it printed:\n${log.slice(from)}`))
      }
      function cleanup() {
        clearTimeout(timer)
        proc.stdout!.off('data', onData)
        proc.stderr!.off('data', onData)
        proc.off('exit', onExit)
      }
      proc.stdout!.on('data', onData)
      proc.stderr!.on('data', onData)
      proc.on('exit', onExit)
      onData()
    })
  }

  const halt = async (haltOptions: { hard?: boolean } = {}) => {
    const proc = child
    if (!proc || proc.exitCode !== null || proc.signalCode !== null) return
    proc.kill(haltOptions.hard ? 'SIGKILL' : 'SIGTERM')
    if (!(await waitForExit(proc, 10_000))) {
      proc.kill('SIGKILL')
      await waitForExit(proc, 5_000)
    }
  }

  const stop = async () => {
    await halt()
    rmSync(dataDir, { recursive: true, force: true })
  }

  const url = await launch().catch(async (err: unknown) => {
    await stop()
    throw err
  })

  return {
    url,
    port: Number(new URL(url).port),
    dataDir,
    output: () => log,
    halt,
    async start() {
      const proc = child
      if (proc && proc.exitCode === null && proc.signalCode === null) return
      await launch()
    },
    stop,
  }
}

export interface BrowserSession {
  context: BrowserContext
  page: Page
  /** Console errors and uncaught page errors seen so far, for failure reports. */
  problems: string[]
  label: string
  close(): Promise<void>
}

/**
 * Launches a fresh, independent headless Chromium (own profile directory, own cookies). Viewport 1280×800 unless
 * told otherwise.
 */
export async function openBrowser(options: { viewport?: { width: number; height: number }; label?: string } = {}): Promise<BrowserSession> {
  if (!existsSync(CHROMIUM))
    throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get update && apt-get install -y chromium)`)
  const profile = mkdtempSync(path.join(tmpdir(), 'penumbra-e2e-browser-'))
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: CHROMIUM_ARGS,
    viewport: options.viewport ?? { width: 1280, height: 800 },
  })
  const page = context.pages()[0] ?? (await context.newPage())
  const problems: string[] = []
  const watch = (p: Page) => {
    p.on('console', (msg) => {
      if (msg.type() === 'error') problems.push(`console: ${msg.text()}`)
    })
    p.on('pageerror', (err) => problems.push(`page error: ${err.message}`))
  }
  watch(page)
  context.on('page', watch)
  let closed = false
  return {
    context,
    page,
    problems,
    label: options.label ?? 'browser',
    async close() {
      if (closed) return
      closed = true
      await context.close().catch(() => undefined)
      rmSync(profile, { recursive: true, force: true })
    },
  }
}

function fileSafe(text: string): string {
  return text.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 120) || 'test'
}

/** Saves a full-page screenshot of every open page of each browser into test-results/, with its problems beside it. */
export async function saveScreenshots(name: string, browsers: readonly BrowserSession[]): Promise<string[]> {
  mkdirSync(RESULTS_DIR, { recursive: true })
  const saved: string[] = []
  for (const [i, browser] of browsers.entries()) {
    for (const [j, page] of browser.context.pages().entries()) {
      const base = path.join(RESULTS_DIR, `${fileSafe(name)}--${fileSafe(browser.label)}-${i}-${j}`)
      try {
        await page.screenshot({ path: `${base}.png`, fullPage: true, timeout: 10_000 })
        saved.push(`${base}.png`)
      } catch {
        // a closed or crashed page has nothing to show
      }
      writeFileSync(`${base}.txt`, [`url: ${page.url()}`, ...browser.problems].join('\n') + '\n')
    }
  }
  return saved
}

export interface BrowserSuite {
  /** The running server (available inside tests and hooks after beforeAll). */
  readonly server: RunningServer
  /** Opens another independent browser, closed automatically after the suite. */
  newBrowser(options?: { viewport?: { width: number; height: number }; label?: string }): Promise<BrowserSession>
}

/** Registers beforeAll/afterAll hooks for one server and any number of browsers, with screenshots on failure. */
export function useBrowserSuite(options: { env?: Record<string, string> } = {}): BrowserSuite {
  let server: RunningServer | undefined
  const browsers: BrowserSession[] = []

  beforeAll(async () => {
    server = await startServer({ env: options.env })
  })

  beforeEach((context) => {
    context.onTestFailed(async () => {
      const saved = await saveScreenshots(context.task.name, browsers)
      if (saved.length) console.error(`screenshots saved:\n  ${saved.join('\n  ')}`)
      for (const b of browsers) if (b.problems.length) console.error(`${b.label} problems:\n  ${b.problems.join('\n  ')}`)
      if (server) console.error(`server output (last lines):\n${server.output().split('\n').slice(-40).join('\n')}`)
    })
  })

  afterAll(async () => {
    for (const b of browsers.splice(0)) await b.close()
    await server?.stop()
  })

  return {
    get server() {
      if (!server) throw new Error('the server is not running (useBrowserSuite starts it in beforeAll)')
      return server
    },
    async newBrowser(browserOptions) {
      const b = await openBrowser({ ...browserOptions, label: browserOptions?.label ?? `browser${browsers.length + 1}` })
      browsers.push(b)
      return b
    },
  }
}

/** Signs in through the sign-in page and waits until the app has left it. */
export async function signIn(page: Page, baseUrl: string, who: { email: string; password: string }): Promise<void> {
  await page.goto(`${baseUrl}/sign-in`)
  await page.getByLabel('E-mail').fill(who.email)
  await page.getByLabel('Password', { exact: true }).fill(who.password)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 15_000 })
}

/** The developer mailbox (`/dev/mail.json`), newest first, checked against the shared reply schema. */
export async function readMailbox(baseUrl: string): Promise<DevMail[]> {
  const res = await fetch(`${baseUrl}/dev/mail.json`)
  if (!res.ok) throw new Error(`GET /dev/mail.json answered ${res.status}`)
  return devMailReply.parse(await res.json()).messages
}

/** Polls the developer mailbox until a message to `to` whose subject or text matches arrives; returns the newest. */
export async function waitForMail(baseUrl: string, to: string, match: RegExp = /./, timeoutMs = 15_000): Promise<DevMail> {
  const until = Date.now() + timeoutMs
  for (;;) {
    const mails = await readMailbox(baseUrl)
    const found = mails.find(
      (m) => m.to.some((t) => t.toLowerCase().includes(to.toLowerCase())) && (match.test(m.subject) || match.test(m.text)),
    )
    if (found) return found
    if (Date.now() > until)
      throw new Error(
        `no mail to ${to} matching ${match} arrived in ${timeoutMs} ms; the mailbox holds: ${mails.map((m) => `${m.to.join(', ')}: ${m.subject}`).join('; ') || 'nothing'}`,
      )
    await new Promise((r) => setTimeout(r, 250))
  }
}
