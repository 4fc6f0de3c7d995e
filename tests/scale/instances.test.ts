// Three app processes on one PostgreSQL and one Redis (DESIGN §10): people connected to different instances edit one
// sheet and converge; a refused update never leaves the instance that refused it; kill -9 of an instance loses
// nothing it relayed; comments reach live comment streams on every instance; removing a member disconnects them
// everywhere. Runs under `npm run test:scale`.
import { randomBytes } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, cellToMap, docToSheetFile } from '../../shared/doc/sheetDoc'
import type { SheetFile } from '../../shared/schema/sheet'
import { DEMO_ACCOUNTS } from '../../server/db/seed'
import { CLOSE } from '../../server/collab/index'
import { SESSION_COOKIE } from '../../server/services/sessions'
import { CSRF_HEADER } from '../../shared/schema/api'
import { connectClient, rawClient, until, type Client } from '../collab/support/fixture'
import { syncFrame } from '../collab/support/frames'
import { scaleSkipReason, scratchDatabase, signIn, startInstance, storedDocument, type Instance, type InstanceOptions, type ScratchDatabase, type Session } from './support/instances'

const skip = scaleSkipReason()
if (skip) console.warn(`tests/scale/instances.test.ts skipped: ${skip}`)

const TRIAL: SheetFile = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Scale trial, film C-4',
  cells: [
    { id: 'cEg', kind: 'parameter', name: 'Eg', value: 1.52, unit: 'eV', min: 1, max: 2 },
    { id: 'cd', kind: 'parameter', name: 'd', value: 700, unit: 'nm' },
    { id: 'cx', kind: 'formula', name: 'x', source: 'Eg*2', unit: 'eV' },
    { id: 'cn', kind: 'note', text: 'Shared by three app instances.' },
  ],
}

const account = (role: string) => DEMO_ACCOUNTS.find((a) => a.role === role)!
const formulaText = (doc: Y.Doc) => ((cellsOf(doc).toArray()[2] as Y.Map<unknown> | undefined)?.get('source') as Y.Text | undefined)?.toString() ?? ''
const byId = (doc: Y.Doc, id: string) => cellsOf(doc).toArray().find((m) => m instanceof Y.Map && m.get('id') === id) as Y.Map<unknown> | undefined

describe.skipIf(!!skip)('three app instances on one PostgreSQL and one Redis', () => {
  const secret = randomBytes(32).toString('base64url')
  let db: ScratchDatabase
  const instances: Instance[] = []
  let A: Instance, B: Instance, C: Instance
  let owner: Session, editor: Session, reviewer: Session, viewer: Session
  let labId: string
  let options: InstanceOptions
  const clients: Client[] = []
  const connect = (instance: Instance, sheetId: string, who: Session) => {
    const c = connectClient(instance, sheetId, who.token)
    clients.push(c)
    return c
  }

  async function newSheet(title: string): Promise<string> {
    const res = await owner.request<{ id: string }>(B, 'POST', `/api/labs/${labId}/sheets`, { ...TRIAL, title })
    expect(res.status).toBe(201)
    return res.body.id
  }

  beforeAll(async () => {
    db = await scratchDatabase(process.env.DATABASE_URL!)
    // Redis keys of this run only (the rate-limit counts would otherwise carry over to the next run)
    options = { databaseUrl: db.url, redisUrl: process.env.REDIS_URL!, secret, env: { REDIS_PREFIX: `pn-test-${randomBytes(4).toString('hex')}:` } }
    // the first instance migrates the empty database and seeds the demo lab; the others find it in place
    A = await startInstance('a', options)
    instances.push(A)
    ;[B, C] = await Promise.all([startInstance('b', options), startInstance('c', options)])
    instances.push(B, C)
    // sessions are signed cookies: signed in on one instance, accepted by every other
    owner = await signIn(A, account('owner').email, account('owner').password)
    editor = await signIn(B, account('editor').email, account('editor').password)
    reviewer = await signIn(C, account('reviewer').email, account('reviewer').password)
    viewer = await signIn(A, account('viewer').email, account('viewer').password)
    const labs = await owner.request<{ labs: { id: string; name: string }[] }>(C, 'GET', '/api/labs')
    labId = labs.body.labs[0].id
  }, 120_000)

  afterAll(async () => {
    for (const c of clients) c.destroy()
    await Promise.all(instances.map((i) => i.stop()))
    await db?.drop()
  }, 60_000)

  it('seeds the demo lab once, and every instance serves every signed-in request', async () => {
    for (const instance of [A, B, C]) {
      const me = await editor.request<{ user: { email: string } }>(instance, 'GET', '/api/auth/me')
      expect(me.body.user.email).toBe(account('editor').email)
      const labs = await viewer.request<{ labs: unknown[] }>(instance, 'GET', '/api/labs')
      expect(labs.body.labs).toHaveLength(1)
    }
  })

  it('editors connected to different instances converge, and a viewer on the third sees the same sheet', async () => {
    const sheetId = await newSheet('Convergence trial')
    const onA = connect(A, sheetId, editor)
    const onB = connect(B, sheetId, owner)
    const onC = connect(C, sheetId, viewer)
    await Promise.all([onA.synced(), onB.synced(), onC.synced()])
    const textA = byId(onA.doc, 'cx')!.get('source') as Y.Text
    const textB = byId(onB.doc, 'cx')!.get('source') as Y.Text
    for (let i = 0; i < 40; i++) {
      textA.insert(textA.length, String(i % 10))
      textB.insert(0, 'ab'[i % 2])
      if (i % 5 === 4) await new Promise((r) => setTimeout(r, 2))
    }
    byId(onB.doc, 'cd')!.set('value', 725)
    cellsOf(onA.doc).push([cellToMap({ kind: 'parameter', name: 'k', value: 0.02, unit: '' }, 'ck')])
    const expected = () => JSON.stringify(docToSheetFile(onA.doc))
    await until(
      () => JSON.stringify(docToSheetFile(onB.doc)) === expected() && JSON.stringify(docToSheetFile(onC.doc)) === expected() && formulaText(onA.doc).length === 84,
      'the three documents to converge',
      20_000,
    )
    expect(byId(onC.doc, 'cd')!.get('value')).toBe(725)
    expect(byId(onC.doc, 'ck')).toBeDefined()
    // what PostgreSQL holds is that same document
    const stored = await storedDocument(db.url, sheetId)
    expect(JSON.stringify(docToSheetFile(stored.doc))).toBe(expected())
  }, 60_000)

  it('a refused update never reaches a reader on another instance', async () => {
    const sheetId = await newSheet('Refusal trial')
    const reader = connect(C, sheetId, viewer)
    await reader.synced()
    const base = await storedDocument(db.url, sheetId)
    const editOf = (change: (d: Y.Doc) => void) => {
      const d = new Y.Doc()
      Y.applyUpdate(d, Y.encodeStateAsUpdate(base.doc))
      const sv = Y.encodeStateVector(d)
      change(d)
      return Y.encodeStateAsUpdate(d, sv)
    }
    // a reviewer may not edit: refused on A, connection kept
    const reviewerOnA = await rawClient(A, sheetId, reviewer.token)
    reviewerOnA.ws.send(syncFrame(2, editOf((d) => byId(d, 'cEg')!.set('value', 1.99))))
    // an editor's update that would break the document: refused on B and its socket closed
    const editorOnB = await rawClient(B, sheetId, editor.token)
    editorOnB.ws.send(syncFrame(2, editOf((d) => (cellsOf(d) as unknown as Y.Array<unknown>).push(['not a cell']))))
    expect((await editorOnB.closed).code).toBe(CLOSE.malformed)
    // a valid edit sent after both, from A: once the reader has it, anything relayed before it would have arrived too
    const ownerOnA = await rawClient(A, sheetId, owner.token)
    ownerOnA.ws.send(syncFrame(2, editOf((d) => byId(d, 'cd')!.set('value', 640))))
    await until(() => byId(reader.doc, 'cd')?.get('value') === 640, 'the valid edit at the reader on C', 10_000)
    await new Promise((r) => setTimeout(r, 300))
    expect(byId(reader.doc, 'cEg')!.get('value')).toBe(1.52)
    expect(cellsOf(reader.doc).toArray().every((m) => m instanceof Y.Map)).toBe(true)
    const stored = await storedDocument(db.url, sheetId)
    expect(byId(stored.doc, 'cEg')!.get('value')).toBe(1.52)
    expect(cellsOf(stored.doc).length).toBe(4)
    expect(reviewerOnA.isOpen()).toBe(true)
    reviewerOnA.ws.close()
    ownerOnA.ws.close()
  }, 60_000)

  it('kill -9 of an instance loses nothing it relayed; the writer catches up when it is back on the same port', async () => {
    const sheetId = await newSheet('Kill trial')
    const writer = connect(A, sheetId, editor)
    const observer = connect(B, sheetId, owner)
    await Promise.all([writer.synced(), observer.synced()])
    const keystrokes = (doc: Y.Doc) => Math.max(0, formulaText(doc).length - 4)
    let killed: Promise<void> | null = null
    observer.doc.on('update', () => {
      if (!killed && keystrokes(observer.doc) >= 150) killed = A.kill9()
    })
    const text = byId(writer.doc, 'cx')!.get('source') as Y.Text
    for (let i = 0; i < 400; i++) {
      text.insert(text.length, String(i % 10))
      if (i % 4 === 3) await new Promise((r) => setImmediate(r))
    }
    await until(() => killed !== null, 'the observer on B to see 150 keystrokes', 20_000)
    await killed
    const seen = formulaText(observer.doc)
    // everything the observer received (relayed by A through Redis) is in PostgreSQL
    const stored = formulaText((await storedDocument(db.url, sheetId)).doc)
    expect(stored.startsWith(seen)).toBe(true)
    expect(keystrokes(observer.doc)).toBeGreaterThanOrEqual(150)

    const port = A.port
    A = await startInstance('a2', { ...options, port })
    instances.push(A)
    await until(() => writer.provider.wsconnected && writer.provider.synced, 'the writer to reconnect to the restarted A', 20_000)
    const late = connect(C, sheetId, viewer)
    await late.synced()
    await until(() => keystrokes(late.doc) === 400 && keystrokes(observer.doc) === 400, 'all 400 keystrokes on B and C', 20_000).catch((err: Error) => {
      const counts = `writer ${keystrokes(writer.doc)}, B ${keystrokes(observer.doc)}, C ${keystrokes(late.doc)}`
      throw new Error(`${err.message} (${counts}); the restarted A printed:\n${A.output()}\nB printed:\n${B.output()}\nC printed:\n${C.output()}`)
    })
    expect(formulaText(late.doc)).toBe(formulaText(writer.doc))
  }, 120_000)

  it('a comment posted through one instance reaches live comment streams opened on the others', async () => {
    const sheetId = await newSheet('Comment trial')
    // the viewer's live comment stream on C, the owner's on B (server-sent events)
    const streams = [
      { on: C, who: viewer },
      { on: B, who: owner },
    ].map(({ on, who }) => {
      const abort = new AbortController()
      let text = ''
      const opened = fetch(`${on.url}/api/sheets/${sheetId}/comments/events`, { headers: { cookie: `${SESSION_COOKIE}=${who.token}` }, signal: abort.signal }).then(async (res) => {
        expect(res.status).toBe(200)
        const reader = res.body!.getReader()
        const decoder = new TextDecoder()
        void (async () => {
          for (;;) {
            const { value, done } = await reader.read().catch(() => ({ value: undefined, done: true }))
            if (done) return
            text += decoder.decode(value, { stream: true })
          }
        })()
      })
      return { opened, abort, text: () => text }
    })
    await Promise.all(streams.map((s) => s.opened))
    await until(() => streams.every((s) => s.text().includes('live')), 'both streams to open')
    const posted = await reviewer.request<{ id: string }>(A, 'POST', `/api/sheets/${sheetId}/comments`, { cellId: 'cEg', text: 'Is 1.52 eV from the Tauc fit or the Urbach edge?' })
    expect(posted.status).toBe(201)
    await until(() => streams.every((s) => s.text().includes(posted.body.id)), 'the comment on the streams of B and C', 10_000)
    const resolved = await owner.request(C, 'PATCH', `/api/comments/${posted.body.id}`, { resolved: true })
    expect(resolved.status).toBe(200)
    await until(() => streams.every((s) => /"resolved":true/.test(s.text())), 'the resolution on both streams', 10_000)
    for (const s of streams) s.abort.abort()
  }, 60_000)

  it('removing a member disconnects them on every instance', async () => {
    const sheetId = await newSheet('Removal trial')
    const on = [connect(A, sheetId, viewer), connect(B, sheetId, viewer), connect(C, sheetId, viewer)]
    await Promise.all(on.map((c) => c.synced()))
    const members = await owner.request<{ members: { userId: string; email: string }[] }>(B, 'GET', `/api/labs/${labId}/members`)
    const viewerId = members.body.members.find((m) => m.email === account('viewer').email)!.userId
    const removed = await owner.request(B, 'DELETE', `/api/labs/${labId}/members/${viewerId}`)
    expect(removed.status).toBe(204)
    await until(() => on.every((c) => c.closes.length > 0), 'the removed viewer to be disconnected on A, B and C', 10_000)
    for (const c of on) expect(c.closes[0].code).toBe(CLOSE.removed)
    // and the next attempt is refused at the door, on any instance
    for (const c of on) c.provider.shouldConnect = false
    const again = await viewer.request(C, 'GET', `/api/sheets/${sheetId}`)
    expect(again.status).toBe(404)
  }, 60_000)
  it('an instance whose Redis is away still signs people in (rate limits pass while they cannot count)', async () => {
    const lonely = await startInstance('no-redis', { ...options, redisUrl: 'redis://127.0.0.1:1' })
    instances.push(lonely)
    const attempt = (password: string) =>
      fetch(`${lonely.url}/api/auth/sign-in`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', [CSRF_HEADER]: '1' },
        body: JSON.stringify({ email: account('editor').email, password }),
      })
    expect((await attempt('not the password')).status).toBe(401)
    expect((await attempt(account('editor').password)).status).toBe(200)
    expect(lonely.output()).toMatch(/rate limits: Redis is unreachable/)
    await lonely.stop()
  }, 60_000)

  // last: it uses up this address's failed sign-ins for the window
  it('counts failed sign-ins from one address across all instances (rate limits live in Redis)', async () => {
    const statuses: number[] = []
    for (let i = 0; i < 4; i++)
      for (const instance of [A, B, C]) {
        const res = await fetch(`${instance.url}/api/auth/sign-in`, {
          method: 'POST',
          headers: { 'content-type': 'application/json', [CSRF_HEADER]: '1' },
          body: JSON.stringify({ email: account('viewer').email, password: 'not the password' }),
        })
        statuses.push(res.status)
      }
    // 10 failures per address and window (config.ts); in-memory counting would have allowed 4 per instance
    expect(statuses.slice(0, 10).every((s) => s === 401)).toBe(true)
    expect(statuses.slice(10)).toEqual([429, 429])
  }, 60_000)
})
