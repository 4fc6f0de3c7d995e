/**
 * Starts Penumbra: opens the database (SQLite in DATA_DIR, or PostgreSQL when DATABASE_URL=postgres://… names one)
 * and runs its migrations, seeds the demo lab into an empty database, serves the built client and the API on one port, routes websocket upgrades under /collab/ to the
 * collaboration server, and closes everything cleanly on SIGTERM or SIGINT.
 *
 *   node --import tsx server/index.ts        (npm run serve; npm start builds the client first)
 */
import http from 'node:http'
import path from 'node:path'
import { existsSync, mkdirSync } from 'node:fs'
import { fileURLToPath, pathToFileURL } from 'node:url'
import type { AddressInfo } from 'node:net'
import type { Duplex } from 'node:stream'
import { createApp } from './app'
import { loadSecret } from './secret'

export { loadSecret }
import { defaultConfig, type AppConfig } from './config'
import { openDb, openPgDb, type AnyDbHandle } from './db/client'
import { dialectFromUrl } from './db/dialect'
import { demoAccountsPresent, formatDemoTable, isEmpty, seedDemo } from './db/seed'
import { demoGuestUrl } from './db/seedSnapshots'
import { createDevMailer, smtpMailer, type Mailer } from './mail/mailer'
import { pruneExpired } from './services/housekeeping'
import { closeSharedEvaluator } from './services/evaluation'
import { createCollab, type Collab } from './collab/index'
import type { AppHooks } from './deps'
import { Redis } from 'ioredis'
import { redisRateLimitStores } from './middleware/rateLimits'

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..')

export interface ServerEnv {
  PORT?: string
  HOST?: string
  DATA_DIR?: string
  PENUMBRA_SECRET?: string
  SMTP_URL?: string
  NODE_ENV?: string
  /** Base URL for mailed links when the app is reached through another address (a reverse proxy). */
  PUBLIC_URL?: string
  /** Express 'trust proxy' (e.g. 1 behind one reverse proxy). */
  TRUST_PROXY?: string
  /** Port of the local fake SMTP server (default: any free port). */
  DEV_SMTP_PORT?: string
  /** `postgres://user@host:port/database` selects PostgreSQL (the scale-out configuration); unset, SQLite in DATA_DIR. */
  DATABASE_URL?: string
  /** redis://…: live edits and control events fan out to the other app instances through Redis streams. */
  REDIS_URL?: string
  /** Prefix of every Redis key of this deployment (default `penumbra:`), so several can share one Redis. */
  REDIS_PREFIX?: string
}

/**
 * The address the server listens on: HOST when set (e.g. `0.0.0.0` to let the lab's other machines in); otherwise
 * every interface in production, and only this machine (127.0.0.1) outside it, so a development server with its
 * mailbox of sign-in links is not reachable from the network by accident.
 */
export function listenHost(env: Pick<ServerEnv, 'HOST' | 'NODE_ENV'>): string | undefined {
  if (env.HOST) return env.HOST
  return env.NODE_ENV === 'production' ? undefined : '127.0.0.1'
}

export interface RunningServer {
  url: string
  /** The address listened on (see listenHost). */
  host: string
  /** The demo lab's guest link while it is usable (printed at start), else null. */
  demoGuestUrl: string | null
  port: number
  dataDir: string
  handle: AnyDbHandle
  mailer: Mailer
  config: AppConfig
  collab: Collab | null
  close(): Promise<void>
}


function parseTrustProxy(value: string | undefined): AppConfig['trustProxy'] {
  if (!value) return false
  if (value === 'true') return true
  if (value === 'false') return false
  return /^\d+$/.test(value) ? Number(value) : value
}

export async function startServer(env: ServerEnv = process.env, log: (m: string) => void = console.log): Promise<RunningServer> {
  const warn = (m: string) => console.warn(m)
  const production = env.NODE_ENV === 'production'
  const port = env.PORT ? Number(env.PORT) : 3000
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`PORT must be a port number, not "${env.PORT}".`)
  const dataDir = path.resolve(env.DATA_DIR ?? 'data')
  mkdirSync(dataDir, { recursive: true })

  const handle: AnyDbHandle =
    dialectFromUrl(env.DATABASE_URL) === 'pg'
      ? await openPgDb(env.DATABASE_URL as string, { log: warn })
      : openDb(path.join(dataDir, 'penumbra.sqlite'), { backgroundCheckpoints: true })
  const secret = loadSecret(dataDir, env.PENUMBRA_SECRET, warn)

  let mailer: Mailer
  if (env.SMTP_URL) mailer = smtpMailer(env.SMTP_URL, defaultConfig().mailFrom)
  else {
    if (production) warn('SMTP_URL is not set: mail goes to a local catcher and reaches nobody. Set SMTP_URL in production.')
    mailer = await createDevMailer(defaultConfig().mailFrom, { port: env.DEV_SMTP_PORT ? Number(env.DEV_SMTP_PORT) : 0 })
  }

  if (production && !env.PUBLIC_URL)
    warn('NODE_ENV=production without PUBLIC_URL: session cookies are Secure (sign in over https, e.g. behind a TLS proxy with TRUST_PROXY), and mailed links point at localhost. Set PUBLIC_URL to the address people use.')
  const clientDir = path.join(ROOT, 'dist')
  const hasClient = existsSync(path.join(clientDir, 'index.html'))
  if (!hasClient) warn('The client is not built (no dist/index.html): serving the API only. `npm start` builds it; `npm run dev` serves it with hot reload.')
  const config = defaultConfig({
    publicUrl: env.PUBLIC_URL?.replace(/\/+$/, '') ?? `http://localhost:${port}`,
    production,
    clientDir: hasClient ? clientDir : null,
    // public over https, or in production unless PUBLIC_URL says plain http on purpose
    cookieSecure: env.PUBLIC_URL ? env.PUBLIC_URL.startsWith('https:') : production,
    trustProxy: parseTrustProxy(env.TRUST_PROXY),
  })

  if (await isEmpty(handle.db)) {
    const seeded = await seedDemo({ db: handle.db, config }, { warn, secret })
    log(`Seeded the demo lab with ${seeded.sheets.length} sheet(s).`)
  }

  const prune = () => pruneExpired(handle.db).catch((err: unknown) => warn(`housekeeping failed: ${err instanceof Error ? err.message : String(err)}`))
  await prune()
  const housekeeping = setInterval(() => void prune(), 3600_000)
  housekeeping.unref()

  const redisPrefix = env.REDIS_PREFIX || 'penumbra:'
  // behind a reverse proxy the browser's Origin is the public address, not the Host the proxy forwards
  const allowedOrigins = env.PUBLIC_URL ? [new URL(env.PUBLIC_URL).origin] : undefined
  const collab = createCollab({
    db: handle.db,
    secret,
    allowedOrigins,
    // several instances: the fan-out through Redis (the update log follows the database: PostgreSQL or SQLite)
    redisUrl: env.REDIS_URL || undefined,
    redisPrefix: redisPrefix,
    log: (m) => log(`collab: ${m}`),
  })
  const hooks: AppHooks = {
    membershipChanged: (labId, userId) => collab.membershipChanged(labId, userId),
    sheetDeleted: (sheetId) => collab.sheetDeleted(sheetId),
    sessionsEnded: (userId) => collab.sessionsEnded(userId),
  }
  // several instances count rate limits together in Redis; while Redis is away a count fails at once (the request
  // then passes) rather than waiting in a queue
  const limitsRedis = env.REDIS_URL ? new Redis(env.REDIS_URL, { maxRetriesPerRequest: 1, enableOfflineQueue: false }) : null
  let limitsFailing = false
  limitsRedis?.on('error', (err: Error) => {
    if (!limitsFailing) warn(`rate limits: Redis is unreachable (${err.message}); requests are not limited until it is back`)
    limitsFailing = true
  })
  limitsRedis?.on('ready', () => (limitsFailing = false))
  const rateLimitStores = limitsRedis ? redisRateLimitStores(limitsRedis, `${redisPrefix}limit:`) : undefined
  const app = createApp({ db: handle.db, secret, mailer, config, hooks, rateLimitStores })
  const server = http.createServer(app)
  server.on('upgrade', (req, socket: Duplex, head: Buffer) => {
    if (req.url?.startsWith('/collab/')) {
      collab.handleUpgrade(req, socket, head).catch((err: unknown) => {
        warn(`collab upgrade failed: ${err instanceof Error ? err.message : String(err)}`)
        socket.destroy()
      })
    } else {
      socket.end('HTTP/1.1 404 Not Found\r\nConnection: close\r\nContent-Length: 0\r\n\r\n')
      socket.destroy()
    }
  })

  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(port, listenHost(env), () => {
      server.off('error', reject)
      resolve()
    })
  })
  const actualPort = (server.address() as AddressInfo).port
  if (!env.PUBLIC_URL) config.publicUrl = `http://localhost:${actualPort}`
  const url = `http://localhost:${actualPort}`

  let closing: Promise<void> | null = null
  const close = () =>
    (closing ??= (async () => {
      clearInterval(housekeeping)
      await collab.close().catch((err: unknown) => warn(`closing collab: ${String(err)}`))
      await limitsRedis?.quit().catch(() => limitsRedis.disconnect())
      await new Promise<void>((resolve) => {
        server.close(() => resolve())
        // idle keep-alive connections go now; requests still running get a moment to finish
        server.closeIdleConnections()
        setTimeout(() => server.closeAllConnections(), 2000).unref()
      })
      closeSharedEvaluator()
      await mailer.close().catch((err: unknown) => warn(`closing mail: ${String(err)}`))
      if (handle.dialect === 'sqlite') {
        try {
          handle.sqlite.pragma('wal_checkpoint(TRUNCATE)')
        } catch {
          // an in-memory or already-closed database has nothing to checkpoint
        }
      }
      await handle.close()
    })())

  const address = server.address()
  return {
    url,
    host: typeof address === 'object' && address ? address.address : '',
    demoGuestUrl: await demoGuestUrl(handle.db, secret, config),
    port: actualPort,
    dataDir,
    handle,
    mailer,
    config,
    collab,
    close,
  }
}

async function main(): Promise<void> {
  let running: RunningServer
  try {
    running = await startServer()
  } catch (err) {
    console.error(`Penumbra could not start: ${err instanceof Error ? err.message : String(err)}`)
    process.exit(1)
  }
  console.log(`Penumbra is running at ${running.url}`)
  const demo = await demoAccountsPresent(running.handle.db)
  if (demo.length > 0) console.log(`\nDemo sign-ins (fictional lab "Halvorsen Thin-Film Lab"):\n${formatDemoTable(demo)}\n`)
  if (running.demoGuestUrl) console.log(`Demo guest link (a snapshot of Film H-17, no sign-in): ${running.demoGuestUrl}`)
  if (!running.config.production) console.log(`Mail sent while developing: ${running.url}/dev/mail`)

  let stopping = false
  const stop = (signal: string) => {
    if (stopping) {
      console.log(`${signal} again: exiting now.`)
      process.exit(1)
    }
    stopping = true
    console.log(`${signal}: closing…`)
    running.close().then(
      () => {
        console.log('Penumbra stopped.')
        process.exit(0)
      },
      (err: unknown) => {
        console.error(`error while closing: ${String(err)}`)
        process.exit(1)
      },
    )
  }
  process.on('SIGTERM', () => stop('SIGTERM'))
  process.on('SIGINT', () => stop('SIGINT'))
}

if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) void main()
