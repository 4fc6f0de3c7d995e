// Three collaboration servers in one process on one PostgreSQL database (the update log) and one Redis (the fan-out),
// as three app instances behind a proxy. Who may do what is decided by a small authenticate hook here (the session and
// membership services have tests of their own), so only the collaboration path is on PostgreSQL.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { randomUUID } from 'node:crypto'
import { Redis } from 'ioredis'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile, sheetFileToDoc } from '../../shared/doc/sheetDoc'
import type { Role } from '../../server/db/schema'
import type { Db } from '../../server/db/client'
import type { Authenticate } from '../../server/collab/auth'
import { CLOSE, type CollabOptions } from '../../server/collab/index'
import { createPgStore } from '../../server/collab/store.pg'
import { DEMO_SHEET, connectClient, startCollabServer, until, type Client, type CollabServer, type Lab } from './support/fixture'
import { PG_SKIP, scratchDatabase, type ScratchDatabase } from './support/pg'

const REDIS_URL = process.env.REDIS_URL ?? ''
const SKIP = PG_SKIP ?? (REDIS_URL ? null : 'REDIS_URL is not set: no Redis server to carry events between instances')

function formula(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}

const SHEET = 'sheet-scale-out'
const LAB = 'lab'

describe.skipIf(SKIP !== null)(`collab: three instances on PostgreSQL and Redis${SKIP ? ` (skipped: ${SKIP})` : ''}`, () => {
  let db: ScratchDatabase
  let redisPrefix: string
  const roles = new Map<string, Role | null>()
  const servers: CollabServer[] = []
  const clients: Client[] = []

  /** The cookie value is the person's name; their role on the one lab is whatever `roles` says now. */
  const authenticate: Authenticate = async (req) => {
    const name = /penumbra_session=([^;]+)/.exec(req.headers.cookie ?? '')?.[1] ?? ''
    const role = roles.get(name)
    if (!role) return { ok: false, status: 403, message: 'you are not a member of the lab that holds this sheet' }
    const sheetId = decodeURIComponent((req.url ?? '').split('?')[0].slice('/collab/'.length))
    return {
      ok: true,
      admission: { user: { id: name, email: `${name}@halvorsen-lab.example`, name, jti: name, exp: Date.now() / 1000 + 3600 }, sheetId, labId: LAB, role, token: name },
    }
  }

  async function instance(instanceId: string, extra: Partial<CollabOptions> = {}): Promise<CollabServer> {
    // The database handle is never reached: authentication is the hook above and the store is PostgreSQL's.
    const lab = { handle: { db: null as unknown as Db } } as Lab
    const server = await startCollabServer(lab, {
      instanceId,
      redisUrl: REDIS_URL,
      redisPrefix,
      hooks: { authenticate, store: createPgStore(db.openPool()) },
      recheckMs: 3_600_000,
      ...extra,
    })
    servers.push(server)
    return server
  }

  function connect(server: CollabServer, name: string): Client {
    const client = connectClient(server, SHEET, name)
    clients.push(client)
    return client
  }

  beforeEach(async () => {
    db = await scratchDatabase()
    redisPrefix = `penumbra-test:${randomUUID()}:`
    await db.addSheet(SHEET)
    await db.pool.query('INSERT INTO sheet_states (sheet_id, state, upto_seq, updated_at) VALUES ($1, $2, 0, $3)', [
      SHEET,
      Buffer.from(Y.encodeStateAsUpdate(sheetFileToDoc(DEMO_SHEET))),
      Date.now(),
    ])
    for (const [name, role] of [['mira', 'owner'], ['tomas', 'editor'], ['ines', 'editor'], ['lena', 'viewer']] as const) roles.set(name, role)
  })
  afterEach(async () => {
    for (const c of clients.splice(0)) c.destroy()
    for (const s of servers.splice(0)) await s.close()
    await db.drop()
    const redis = new Redis(REDIS_URL)
    const keys = await redis.keys(`${redisPrefix}*`)
    if (keys.length > 0) await redis.del(...keys)
    redis.disconnect()
  })

  it('editors on three instances converge while the shared log compacts, a reader on the third sees no refused update, and PostgreSQL ends with the same document', async () => {
    const quick = { compactEvery: 9, idleCompactMs: 30, sweepMs: 10 }
    const [one, two, three] = [await instance('A', quick), await instance('B', quick), await instance('C', quick)]
    const a = connect(one, 'tomas')
    const b = connect(two, 'ines')
    const c = connect(three, 'mira')
    const reader = connect(three, 'lena')
    await Promise.all([a.synced(), b.synced(), c.synced(), reader.synced()])
    for (let i = 0; i < 40; i++) {
      formula(a.doc).insert(formula(a.doc).length, 'a')
      formula(b.doc).insert(0, 'b')
      if (i % 4 === 0) formula(c.doc).insert(Math.floor(formula(c.doc).length / 2), 'c')
      // The reader on instance C types too: refused there, so never stored and never heard on A or B.
      if (i % 10 === 0) formula(reader.doc).insert(0, 'R')
      // A pause after each round, so rows cross between instances and the log compacts while people type.
      await new Promise((r) => setTimeout(r, 8))
    }
    const same = () => {
      const text = formula(a.doc).toString()
      return text.length === 94 && formula(b.doc).toString() === text && formula(c.doc).toString() === text
    }
    await until(same, 'the three editors to converge', 15_000)
    expect(formula(a.doc).toString()).not.toMatch(/R/)
    expect(reader.denied.length).toBe(1)
    const compactions = () => servers.reduce((n, s) => n + s.collab.stats().counters.compactions, 0)
    await until(() => compactions() >= 2, 'compactions on the shared log', 15_000)
    // Whichever instance compacted, every one now counts from the same state row.
    await until(() => servers.every((s) => s.collab.stats().sheets[0]?.uptoSeq === servers[0].collab.stats().sheets[0]?.uptoSeq), 'one state row for all')
    const { rows } = await db.pool.query<{ seq: number }>('SELECT seq FROM sheet_updates WHERE sheet_id = $1 ORDER BY seq', [SHEET])
    expect(new Set(rows.map((r) => r.seq)).size).toBe(rows.length)
    for (const s of servers.splice(0)) await s.close()
    const stored = await createPgStore(db.pool).loadDocument(SHEET)
    expect(formula(stored.doc).toString()).toBe(formula(a.doc).toString())
    expect(docToSheetFile(stored.doc)).toEqual(docToSheetFile(a.doc))
  })

  it('every edit relayed is already in PostgreSQL: a new instance loads all of it while the first has neither closed nor compacted', async () => {
    const one = await instance('A')
    const two = await instance('B')
    const a = connect(one, 'tomas')
    const b = connect(two, 'ines')
    await Promise.all([a.synced(), b.synced()])
    for (let i = 0; i < 25; i++) formula(a.doc).insert(formula(a.doc).length, String(i % 10))
    await until(() => formula(b.doc).length === 4 + 25, 'a’s edits relayed to b')
    const relayed = formula(b.doc).toString()
    expect(one.collab.stats().counters.compactions).toBe(0)
    const fresh = await instance('D')
    const late = connect(fresh, 'mira')
    await late.synced()
    expect(formula(late.doc).toString()).toBe(relayed)
  })

  it('a sheet deleted on one instance closes its sockets on the other two', async () => {
    const [one, two, three] = [await instance('A'), await instance('B'), await instance('C')]
    const onTwo = connect(two, 'ines')
    const onThree = connect(three, 'tomas')
    await Promise.all([onTwo.synced(), onThree.synced()])
    one.collab.sheetDeleted(SHEET)
    await until(() => onTwo.closes.length > 0 && onThree.closes.length > 0, 'the sockets on B and C to close')
    expect(onTwo.closes[0]).toEqual({ code: CLOSE.sheetDeleted, reason: 'this sheet was deleted' })
    expect(onThree.closes[0]).toEqual({ code: CLOSE.sheetDeleted, reason: 'this sheet was deleted' })
    expect(two.collab.stats().documents + three.collab.stats().documents).toBe(0)
  })
})
