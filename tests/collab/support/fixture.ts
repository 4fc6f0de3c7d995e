/**
 * Test factories for the collaboration server: a database with a fictional lab, people in every role and a sheet; a
 * real http server on 127.0.0.1 port 0 routing `/collab/` upgrades; stock y-websocket clients (a `ws` subclass that
 * sends the session cookie, no BroadcastChannel) and raw `ws` clients for hand-made frames.
 */
import http from 'node:http'
import { randomUUID } from 'node:crypto'
import type { AddressInfo } from 'node:net'
import WebSocket from 'ws'
import { and, count, eq } from 'drizzle-orm'
import * as decoding from 'lib0/decoding'
import * as Y from 'yjs'
import { WebsocketProvider } from 'y-websocket'
import { isPostgres, type AnyDbHandle } from '../../../server/db/client'
import { openTestDb } from '../../utils/db'
import { labs, memberships, sheets, sheetUpdates, users, type Role } from '../../../server/db/tables'
import { SESSION_COOKIE, signSession } from '../../../server/services/sessions'
import { seedDocument } from '../../../server/services/documents'
import { createCollab, type Collab, type CollabOptions } from '../../../server/collab/index'
import type { SheetFile } from '../../../shared/schema/sheet'

export const SECRET = new TextEncoder().encode('collab-test-secret-0123456789abcdef')

export const PEOPLE = {
  owner: { name: 'Mira Halvorsen', email: 'mira@halvorsen-lab.example', role: 'owner' },
  editor: { name: 'Tomás Reyes', email: 'tomas@halvorsen-lab.example', role: 'editor' },
  editor2: { name: 'Ines Okafor', email: 'ines@halvorsen-lab.example', role: 'editor' },
  reviewer: { name: 'Anil Varma', email: 'anil@varma-group.example', role: 'reviewer' },
  viewer: { name: 'Lena Fischer', email: 'lena@halvorsen-lab.example', role: 'viewer' },
  outsider: { name: 'Pavel Doe', email: 'pavel@elsewhere.example', role: null },
} as const satisfies Record<string, { name: string; email: string; role: Role | null }>

export type Person = keyof typeof PEOPLE

export const DEMO_SHEET: SheetFile = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Edge model of film B',
  cells: [
    { id: 'cEg', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV', min: 1, max: 2 },
    { id: 'cd', kind: 'parameter', name: 'd', value: 850, unit: 'nm' },
    { id: 'cx', kind: 'formula', name: 'x', source: 'Eg*2', unit: 'eV' },
    { id: 'cn', kind: 'note', text: 'Edge model for the annealed film.' },
  ],
}

export interface Lab {
  /** SQLite (a file or in memory), or a fresh PostgreSQL database under DATABASE_URL. */
  handle: AnyDbHandle
  labId: string
  sheetId: string
  userIds: Record<Person, string>
  tokens: Record<Person, string>
  /** Adds another sheet to the lab (seeded from a sheet file). */
  addSheet(file?: SheetFile): Promise<string>
  setRole(person: Person, role: Role | null): Promise<void>
}

/**
 * A database (file or ':memory:'; under DATABASE_URL a fresh PostgreSQL database) holding one lab with every role,
 * one seeded sheet, and a session per person.
 */
export async function createLab(file = ':memory:', seed: SheetFile = DEMO_SHEET): Promise<Lab> {
  const handle = await openTestDb(file)
  const { db } = handle
  const now = Date.now()
  const userIds = {} as Record<Person, string>
  const tokens = {} as Record<Person, string>
  for (const [key, p] of Object.entries(PEOPLE) as [Person, (typeof PEOPLE)[Person]][]) {
    const id = randomUUID()
    userIds[key] = id
    await db.insert(users).values({ id, email: p.email, name: p.name, passwordHash: 'not-used-by-these-tests', createdAt: now })
    tokens[key] = (await signSession(SECRET, id)).token
  }
  const labId = randomUUID()
  await db.insert(labs).values({ id: labId, name: 'Halvorsen Thin-Film Lab', createdBy: userIds.owner, createdAt: now })
  for (const [key, p] of Object.entries(PEOPLE) as [Person, (typeof PEOPLE)[Person]][])
    if (p.role) await db.insert(memberships).values({ labId, userId: userIds[key], role: p.role, createdAt: now })
  const addSheet = async (sheetFile: SheetFile = seed) => {
    const id = randomUUID()
    await db.insert(sheets).values({ id, labId, title: sheetFile.title, createdBy: userIds.owner, createdAt: now, updatedAt: now })
    await seedDocument(db, id, sheetFile)
    return id
  }
  const sheetId = await addSheet(seed)
  const setRole = async (person: Person, role: Role | null) => {
    await db.delete(memberships).where(andMembership(labId, userIds[person]))
    if (role) await db.insert(memberships).values({ labId, userId: userIds[person], role, createdAt: now })
  }
  return { handle, labId, sheetId, userIds, tokens, addSheet, setRole }
}

function andMembership(labId: string, userId: string) {
  return and(eq(memberships.labId, labId), eq(memberships.userId, userId))
}

export interface CollabServer {
  collab: Collab
  port: number
  /** ws://127.0.0.1:<port>/collab */
  base: string
  close(): Promise<void>
}

/** An http server on 127.0.0.1 (port 0: any free one) whose `/collab/` upgrades go to a fresh collaboration server. */
export async function startCollabServer(lab: Lab, options: Partial<CollabOptions> = {}, listenPort = 0): Promise<CollabServer> {
  const collab = createCollab({ db: lab.handle.db, secret: SECRET, log: () => {}, ...options })
  const server = http.createServer((_req, res) => {
    res.statusCode = 404
    res.end()
  })
  server.on('upgrade', (req, socket, head) => {
    if (req.url?.startsWith('/collab/')) void collab.handleUpgrade(req, socket, head)
    else socket.destroy()
  })
  await new Promise<void>((resolve) => server.listen(listenPort, '127.0.0.1', resolve))
  const port = (server.address() as AddressInfo).port
  return {
    collab,
    port,
    base: `ws://127.0.0.1:${port}/collab`,
    async close() {
      await collab.close()
      server.closeAllConnections()
      await new Promise<void>((resolve) => server.close(() => resolve()))
    },
  }
}

/** A `ws` WebSocket class that sends the session cookie (y-websocket constructs it with url and protocols only). */
export type CookieSocketClass = new (address: string | URL, protocols?: string | string[]) => WebSocket

export function cookieSocket(token: string | null, extraHeaders: Record<string, string> = {}): CookieSocketClass {
  return class CookieWebSocket extends WebSocket {
    constructor(address: string | URL, protocols?: string | string[]) {
      super(address, protocols, { headers: { ...(token ? { Cookie: `${SESSION_COOKIE}=${token}` } : {}), ...extraHeaders } })
    }
  }
}

export interface Client {
  doc: Y.Doc
  provider: WebsocketProvider
  /** Close events seen by this client: code and reason. */
  closes: { code: number; reason: string }[]
  /** Permission-denied reasons received. */
  denied: string[]
  synced(): Promise<void>
  destroy(): void
}

/** A stock y-websocket client (reconnect off after a refusal, so tests see each close once). */
export function connectClient(server: { base: string }, sheetId: string, token: string | null, doc = new Y.Doc()): Client {
  const provider = new WebsocketProvider(server.base, sheetId, doc, {
    WebSocketPolyfill: cookieSocket(token) as unknown as typeof globalThis.WebSocket,
    disableBc: true,
    maxBackoffTime: 200,
  })
  const closes: { code: number; reason: string }[] = []
  const denied: string[] = []
  provider.on('connection-close', (event) => {
    if (event) closes.push({ code: event.code, reason: event.reason })
  })
  // y-websocket reports permission-denied through console.warn from its auth handler; keep our own record instead.
  provider.messageHandlers[2] = (_encoder, decoder) => {
    denied.push(readDenied(decoder))
  }
  return {
    doc,
    provider,
    closes,
    denied,
    synced: () =>
      provider.synced
        ? Promise.resolve()
        : new Promise<void>((resolve) => {
            const on = (s: boolean) => {
              if (s) {
                provider.off('sync', on)
                resolve()
              }
            }
            provider.on('sync', on)
          }),
    destroy: () => {
      provider.destroy()
      doc.destroy()
    },
  }
}

function readDenied(decoder: decoding.Decoder): string {
  const type = decoding.readVarUint(decoder)
  return type === 0 ? decoding.readVarString(decoder) : `auth message ${type}`
}

/** Waits until `check()` is true (polling), or fails with `what` after `ms`. */
export async function until(check: () => boolean | Promise<boolean>, what: string, ms = 5000): Promise<void> {
  const start = Date.now()
  while (!(await check())) {
    if (Date.now() - start > ms) throw new Error(`timed out waiting for ${what}`)
    await new Promise((r) => setTimeout(r, 5))
  }
}

export interface RawClient {
  ws: WebSocket
  /** Every binary frame received. */
  frames: Uint8Array[]
  closed: Promise<{ code: number; reason: string }>
  isOpen(): boolean
}

/** A raw websocket with the cookie, for frames the stock client would never send. Resolves once open. */
export async function rawClient(server: { base: string }, sheetId: string, token: string | null, headers: Record<string, string> = {}): Promise<RawClient> {
  const Socket = cookieSocket(token, headers)
  const ws = new Socket(`${server.base}/${sheetId}`)
  const frames: Uint8Array[] = []
  ws.on('message', (data, isBinary) => {
    if (isBinary) frames.push(new Uint8Array(data as Buffer))
  })
  ws.on('error', () => {})
  const closed = new Promise<{ code: number; reason: string }>((resolve) => ws.on('close', (code, reason) => resolve({ code, reason: reason.toString() })))
  await new Promise<void>((resolve, reject) => {
    ws.once('open', () => resolve())
    ws.once('unexpected-response', (_req, res) => reject(new Error(`upgrade refused with ${res.statusCode}`)))
    ws.once('error', reject)
  })
  return { ws, frames, closed, isOpen: () => ws.readyState === WebSocket.OPEN }
}

/** The HTTP status a refused upgrade answers with, and its JSON body. */
export function upgradeStatus(server: { base: string }, sheetId: string, token: string | null, headers: Record<string, string> = {}): Promise<{ status: number; body: string }> {
  const Socket = cookieSocket(token, headers)
  const ws = new Socket(`${server.base}/${sheetId}`)
  return new Promise((resolve, reject) => {
    ws.on('unexpected-response', (_req, res) => {
      let body = ''
      res.on('data', (c: Buffer) => (body += c.toString()))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }))
    })
    ws.on('open', () => {
      ws.close()
      reject(new Error('the upgrade was accepted'))
    })
    ws.on('error', () => {})
  })
}

/** Sends a sync step 1 and waits for its answer: everything this client sent before has then been handled. */
export async function roundTrip(raw: RawClient): Promise<void> {
  const { syncStep1Frame, readServerFrame } = await import('./frames')
  const from = raw.frames.length
  raw.ws.send(syncStep1Frame())
  await until(() => raw.frames.slice(from).some((f) => readServerFrame(f).type === 'sync-step2'), 'the answer to a sync step 1')
}

/** Rows in the update log of one sheet. */
export async function storedRows(lab: Lab, sheetId = lab.sheetId): Promise<number> {
  return (await lab.handle.db.select({ n: count() }).from(sheetUpdates).where(eq(sheetUpdates.sheetId, sheetId)))[0].n
}

/** The SQLite connection of a lab's database, for tests about SQLite itself (they skip under PostgreSQL). */
export function sqliteOf(lab: Lab) {
  if (lab.handle.dialect !== 'sqlite' || isPostgres(lab.handle.db)) throw new Error('this test needs the SQLite database')
  return lab.handle.sqlite
}
