/**
 * The one fixture hook of the collaboration tests: registers `beforeEach`/`afterEach` that make a fresh lab (database
 * with every role and a seeded sheet) and, unless `start: false`, a collaboration server over it; every client,
 * raw socket and extra server made through the returned handle is closed after the test, then the server and the
 * database.
 *
 *   const t = useCollab({ rateLimit: { messageBurst: 50 } })
 *   it('…', async () => { const a = t.connect('editor'); await a.synced(); … t.server.collab.stats() … })
 */
import { afterEach, beforeEach } from 'vitest'
import {
  connectClient,
  createLab,
  rawClient,
  startCollabServer,
  type Client,
  type CollabServer,
  type Lab,
  type Person,
  type RawClient,
} from './fixture'
import type { CollabOptions } from '../../../server/collab/index'

export interface CollabHookOptions extends Partial<CollabOptions> {
  /** Start a server before each test (default true); with false, call `start()` inside the test. */
  start?: boolean
  /** Database file for the lab (default ':memory:'). */
  file?: () => string
}

export interface CollabHook {
  readonly lab: Lab
  /** The server started before the test (or by `start()`). */
  readonly server: CollabServer
  /** Starts the test's server (when the hook was made with `start: false`) with these options. */
  start(options?: Partial<CollabOptions>): Promise<CollabServer>
  /** Another server over the same lab (a second instance, other limits, or a restart on `port`), closed after the test. */
  another(options?: Partial<CollabOptions>, port?: number): Promise<CollabServer>
  /** A stock y-websocket client of `person` (token) on a sheet (default the seeded one) of a server (default the test's). */
  connect(person: Person | { token: string | null }, o?: { sheetId?: string; server?: { base: string } }): Client
  /** A raw websocket of `person`, open. */
  raw(person: Person | { token: string | null }, o?: { sheetId?: string; server?: { base: string }; headers?: Record<string, string> }): Promise<RawClient>
  /** Forgets a client the test destroyed itself. */
  forget(client: Client): void
}

export function useCollab(options: CollabHookOptions = {}): CollabHook {
  const { start: startNow = true, file, ...serverOptions } = options
  let lab: Lab | null = null
  let server: CollabServer | null = null
  const servers: CollabServer[] = []
  const clients: Client[] = []
  const raws: RawClient[] = []
  const token = (p: Person | { token: string | null }) => (typeof p === 'string' ? need(lab, 'lab').tokens[p] : p.token)

  beforeEach(async () => {
    lab = await createLab(file?.())
    if (startNow) server = await startCollabServer(lab, serverOptions)
  })
  afterEach(async () => {
    for (const c of clients.splice(0)) c.destroy()
    for (const r of raws.splice(0)) r.ws.terminate()
    for (const s of servers.splice(0).reverse()) await s.close()
    if (server) await server.close()
    server = null
    await lab?.handle.close()
    lab = null
  })

  return {
    get lab() {
      return need(lab, 'lab')
    },
    get server() {
      return need(server, 'server (call start() first)')
    },
    async start(extra = {}) {
      if (server) throw new Error('the server of this test is already running')
      server = await startCollabServer(need(lab, 'lab'), { ...serverOptions, ...extra })
      return server
    },
    async another(extra = {}, port = 0) {
      const s = await startCollabServer(need(lab, 'lab'), { ...serverOptions, ...extra }, port)
      servers.push(s)
      return s
    },
    connect(person, o = {}) {
      const c = connectClient(o.server ?? need(server, 'server'), o.sheetId ?? need(lab, 'lab').sheetId, token(person))
      clients.push(c)
      return c
    },
    async raw(person, o = {}) {
      const r = await rawClient(o.server ?? need(server, 'server'), o.sheetId ?? need(lab, 'lab').sheetId, token(person), o.headers)
      raws.push(r)
      return r
    },
    forget(client) {
      const i = clients.indexOf(client)
      if (i >= 0) clients.splice(i, 1)
    },
  }
}

function need<T>(value: T | null, what: string): T {
  if (value === null) throw new Error(`no ${what} in this test`)
  return value
}
