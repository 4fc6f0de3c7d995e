/**
 * The collaboration server behind `/collab/<sheetId>`: the stock y-websocket client connects unchanged.
 *
 *   const collab = createCollab({ db, secret })
 *   server.on('upgrade', (req, socket, head) => { if (req.url?.startsWith('/collab/')) collab.handleUpgrade(req, socket, head) })
 *
 * Three hooks (STYLE 13) — `authenticate` (auth.ts), `loadDocument` / `storeUpdates` / `compact` (store.ts) — around a
 * transport (connection.ts, this file) kept apart from the document registry (registry.ts), which reaches other app
 * instances only through the bus (bus.ts).
 */
import type { IncomingMessage } from 'node:http'
import type { Duplex } from 'node:stream'
import { randomUUID } from 'node:crypto'
import { WebSocketServer } from 'ws'
import type * as Y from 'yjs'
import type { Db } from '../db/client'
import { userForToken } from '../services/sessions'
import { roleInLab, sheetAccess } from '../services/access'
import { deliverComment, relayComments } from '../services/commentEvents'
import { createAuthenticate, sessionMessage, type Authenticate } from './auth'
import { createLocalBus, type CollabBus } from './bus'
import { createRedisBus } from './redisBus'
import { CLOSE, CollabConnection, DEFAULT_RATE_LIMIT, emptyConnectionCounters, type ConnectionCounters, type RateLimit } from './connection'
import { rejectUpgrade } from './http'
import { DocumentRegistry, SheetDeletedError, type RegistryCounters } from './registry'
import { isPromise, type CollabStore } from './store'
import { defaultStore } from './defaultStore'

export { CLOSE } from './connection'
export type { RateLimit } from './connection'
export { createLocalBus, createMemoryBus, type CollabBus, type BusEvent } from './bus'
export { COLLAB_PATH_PREFIX } from './auth'

/** Largest frame accepted (bytes); a bigger one closes that connection with 1009. */
export const MAX_PAYLOAD = 2 * 1024 * 1024

export interface CollabOptions {
  db: Db
  secret: Uint8Array
  /** Browser origins allowed to open sheets; without it an Origin must match the request's Host. */
  allowedOrigins?: readonly string[]
  maxPayload?: number
  rateLimit?: Partial<RateLimit>
  /**
   * Compact once this many rows sit on top of a sheet's state row (default 500) and its typing pauses for
   * `compactPauseMs` (default 500 ms), or at once at four times as many rows.
   */
  compactEvery?: number
  compactPauseMs?: number
  /**
   * On a SQLite file, commit each writer's update in a worker thread while it is applied, still before it is relayed
   * (appendWorker.ts). Default true; false appends on the event loop.
   */
  appendWorker?: boolean
  /** Compact a sheet with rows after this long without a change (default 10 s). */
  idleCompactMs?: number
  /** Unload a sheet this long after its last connection left (default 30 s). */
  evictAfterMs?: number
  /** A hole in the seqs heard from other instances older than this is filled from the database (default 2 s). */
  gapMs?: number
  /** Housekeeping period (default 1 s). */
  sweepMs?: number
  /** Ping period; a connection that misses a pong is dropped (default 30 s). */
  pingMs?: number
  /** How often each connection's session and role are checked again in the database (default 15 s). */
  recheckMs?: number
  /** Fan-out to other app instances (default: none, one process; or Redis streams with `redisUrl`). */
  bus?: CollabBus
  /** REDIS_URL: fan out through Redis streams (redisBus.ts), closed with the collaboration server. */
  redisUrl?: string
  /** Prefix of the Redis keys (default `penumbra:`). */
  redisPrefix?: string
  instanceId?: string
  hooks?: { authenticate?: Authenticate; store?: CollabStore }
  log?: (message: string) => void
}

export interface CollabStats {
  documents: number
  connections: number
  readers: number
  writers: number
  counters: RegistryCounters & ConnectionCounters & { upgradesRefused: number }
  sheets: { sheetId: string; connections: number; rowsSinceCompaction: number; uptoSeq: number }[]
}

export interface Collab {
  /** Handles an HTTP upgrade under `/collab/`: refuses with 400/401/403/404/503 before the websocket exists. */
  handleUpgrade(req: IncomingMessage, socket: Duplex, head: Buffer): Promise<void>
  /** A member's role changed or they left: applied to their open connections at once (and on other instances). */
  membershipChanged(labId: string, userId: string): void
  /** A sheet was deleted: its connections are closed (4404) and its document unloaded. */
  sheetDeleted(sheetId: string): void
  /** Some of a person's sessions ended: their connections here and on every other instance are checked at once. */
  sessionsEnded(userId: string): void
  /**
   * Changes a sheet's live document from the server (import into an existing sheet, restore): stored before it
   * returns and relayed to everyone connected, like an editor's change.
   */
  changeDocument(sheetId: string, mutate: (doc: Y.Doc) => void, userId?: string | null): Promise<void>
  /** Closes every connection (1001), stores and compacts every open document. Leaves the database open. */
  close(): Promise<void>
  stats(): CollabStats
}

export function createCollab(options: CollabOptions): Collab {
  const { db } = options
  const log = options.log ?? ((message: string) => console.warn(`[collab] ${message}`))
  const instanceId = options.instanceId ?? randomUUID()
  const ownBus = !options.bus && options.redisUrl ? createRedisBus(options.redisUrl, { prefix: options.redisPrefix, log: (m) => log(`redis: ${m}`) }) : null
  const bus = options.bus ?? ownBus ?? createLocalBus()
  const authenticate = options.hooks?.authenticate ?? createAuthenticate(db, options.secret, options.allowedOrigins)
  const limit: RateLimit = { ...DEFAULT_RATE_LIMIT, ...options.rateLimit }
  const pingMs = options.pingMs ?? 30_000
  const recheckMs = options.recheckMs ?? 15_000
  const connCounters = emptyConnectionCounters()
  let upgradesRefused = 0
  let closing = false
  const connections = new Set<CollabConnection>()

  const ownStore = options.hooks?.store ? null : defaultStore(db, { appendWorker: options.appendWorker ?? true, log })
  const registry = new DocumentRegistry({
    store: options.hooks?.store ?? ownStore!,
    bus,
    instanceId,
    compactEvery: options.compactEvery ?? 500,
    compactPauseMs: options.compactPauseMs ?? 500,
    idleCompactMs: options.idleCompactMs ?? 10_000,
    evictAfterMs: options.evictAfterMs ?? 30_000,
    gapMs: options.gapMs,
    log,
    onControl: (event) => {
      if (event.type === 'membership') applyMembership(event.labId, event.userId)
      else if (event.type === 'sessions') recheckUser(event.userId)
      else if (event.type === 'comment') deliverComment(event.sheetId, event.comment)
      else closeSheet(event.sheetId)
    },
  })

  // comments published in this process go to the other instances' live comment streams (a bus between processes only:
  // instances sharing one process share its listeners already)
  const stopCommentRelay = ownBus ? relayComments((sheetId, comment) => bus.publish(instanceId, { type: 'comment', sheetId, comment })) : () => {}

  const wss = new WebSocketServer({ noServer: true, maxPayload: options.maxPayload ?? MAX_PAYLOAD, perMessageDeflate: false, clientTracking: false })

  let lastPing = Date.now()
  const sweep = setInterval(() => {
    const now = Date.now()
    registry.sweep(now)
    const pingDue = now - lastPing >= pingMs
    if (pingDue) lastPing = now
    for (const conn of [...connections]) {
      if (pingDue) conn.ping()
      if (now >= conn.expiresAt) conn.close(CLOSE.sessionEnded, 'your session has expired; sign in again')
      else if (now - conn.lastRecheck >= recheckMs) recheck(conn, now)
    }
  }, options.sweepMs ?? 1000)
  sweep.unref()

  /**
   * Session signed out, ended by a password reset, membership changed or sheet deleted without the hook reaching us
   * (another process, a failed hook): caught within `recheckMs`.
   */
  function recheck(conn: CollabConnection, now: number) {
    conn.lastRecheck = now
    userForToken(db, options.secret, conn.token)
      .then(async (session) => {
        if (conn.closed) return
        if (!session.ok) {
          conn.close(CLOSE.sessionEnded, sessionMessage(session.reason))
          return
        }
        const access = await sheetAccess(db, conn.sheetId, conn.userId)
        if (conn.closed) return
        if (!access.sheet) {
          closeSheet(conn.sheetId)
          return
        }
        if (access.role !== conn.role) conn.applyRole(access.role)
      })
      // .catch, not a second .then argument: a failed database read in the check above must not become an
      // unhandled rejection (which ends the process).
      .catch((err: Error) => log(`recheck of a connection failed: ${err.message}`))
  }

  /** Checks every open connection of one person now (a session of theirs ended), instead of at the next recheck. */
  function recheckUser(userId: string) {
    const now = Date.now()
    for (const conn of connections) if (conn.userId === userId) recheck(conn, now)
  }

  function applyMembership(labId: string, userId: string) {
    const affected = [...connections].filter((conn) => conn.labId === labId && conn.userId === userId)
    if (affected.length === 0) return
    roleInLab(db, labId, userId)
      .then((role) => {
        for (const conn of affected) if (!conn.closed) conn.applyRole(role)
      })
      .catch((err: Error) => log(`membership check failed: ${err.message}`))
  }

  function closeSheet(sheetId: string) {
    registry.drop(sheetId, CLOSE.sheetDeleted, 'this sheet was deleted')
    for (const conn of [...connections]) if (conn.sheetId === sheetId) conn.close(CLOSE.sheetDeleted, 'this sheet was deleted')
  }

  async function handleUpgrade(req: IncomingMessage, socket: Duplex, head: Buffer): Promise<void> {
    const onSocketError = () => socket.destroy()
    socket.on('error', onSocketError)
    const refuse = (status: number, message: string) => {
      upgradesRefused++
      rejectUpgrade(socket, status, message)
    }
    if (closing) return refuse(503, 'the server is shutting down; try again shortly')
    let outcome
    try {
      outcome = await authenticate(req)
    } catch (err) {
      log(`authentication failed: ${(err as Error).message}`)
      return refuse(500, 'could not check your session')
    }
    if (!outcome.ok) return refuse(outcome.status, outcome.message)
    if (socket.destroyed) return
    if (closing) return refuse(503, 'the server is shutting down; try again shortly')
    const { admission } = outcome
    let entry
    try {
      // Loaded before the websocket exists, so the first sync step 1 is answered from the stored document.
      const opened = registry.open(admission.sheetId)
      entry = isPromise(opened) ? await opened : opened
    } catch (err) {
      if (err instanceof SheetDeletedError) return refuse(404, 'no such sheet')
      log(`could not load sheet ${admission.sheetId}: ${(err as Error).message}`)
      return refuse(500, 'could not load this sheet')
    }
    if (socket.destroyed) return
    wss.handleUpgrade(req, socket, head, (ws) => {
      socket.off('error', onSocketError)
      const current = registry.get(admission.sheetId)
      if (closing || current !== entry) {
        ws.close(closing ? CLOSE.goingAway : 1013, closing ? 'the server is shutting down' : 'the sheet was reloaded; reconnect')
        return
      }
      const conn = new CollabConnection(ws, admission, entry, registry, connCounters, limit, (c) => connections.delete(c), log, socket)
      // The first recheck falls between half and all of `recheckMs` from now, so a lab reconnecting together after a
      // restart is not rechecked in one burst.
      conn.lastRecheck = Date.now() - Math.random() * (recheckMs / 2)
      connections.add(conn)
    })
  }

  return {
    handleUpgrade,

    membershipChanged(labId, userId) {
      applyMembership(labId, userId)
      bus.publish(instanceId, { type: 'membership', labId, userId })
    },

    sessionsEnded(userId) {
      recheckUser(userId)
      bus.publish(instanceId, { type: 'sessions', userId })
    },

    sheetDeleted(sheetId) {
      closeSheet(sheetId)
      bus.publish(instanceId, { type: 'sheet-deleted', sheetId })
    },

    async changeDocument(sheetId, mutate, userId = null) {
      await registry.change(sheetId, mutate, userId)
    },

    async close() {
      if (closing) return
      closing = true
      clearInterval(sweep)
      stopCommentRelay()
      // Whatever is queued is stored and sent first, then everyone is told to go, then every document is compacted.
      registry.flush()
      const open = [...connections]
      for (const conn of open) conn.close(CLOSE.goingAway, 'the server is shutting down')
      await registry.close()
      await ownStore?.close?.()
      await ownBus?.close()
      wss.close()
      await Promise.race([Promise.all(open.map((c) => c.whenClosed)), new Promise((resolve) => setTimeout(resolve, 1000).unref())])
      for (const conn of open) conn.terminate()
    },

    stats() {
      let readers = 0
      for (const conn of connections) if (!conn.canWrite) readers++
      return {
        documents: registry.sheets().length,
        connections: connections.size,
        readers,
        writers: connections.size - readers,
        counters: { ...registry.counters, busFailures: registry.counters.busFailures + (bus.failures?.() ?? 0), ...connCounters, upgradesRefused },
        sheets: registry.sheets().map((e) => ({ sheetId: e.sheetId, connections: e.peers.size, rowsSinceCompaction: e.seqs.length, uptoSeq: e.uptoSeq })),
      }
    },
  }
}
