// Who may open a sheet, and what a reader's connection may do: upgrades refused before the websocket exists;
// readers' document updates (however their message type is encoded) dropped, counted and denied once, never relayed
// or stored, while the reader stays connected; removed, demoted and promoted members take effect at once.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { revokeSession } from '../../server/services/sessions'
import { CLOSE } from '../../server/collab/index'
import {
  connectClient,
  createLab,
  rawClient,
  roundTrip,
  startCollabServer,
  storedRows,
  until,
  upgradeStatus,
  type Client,
  type CollabServer,
  type Lab,
  type RawClient,
} from './support/fixture'
import { QUERY_AWARENESS_FRAME, appendToFormula, awarenessFrame, readServerFrame, syncFrame } from './support/frames'

function formula(doc: Y.Doc): string {
  const cell = cellsOf(doc)
    .toArray()
    .find((m) => m.get('name') === 'x')
  return (cell?.get('source') as Y.Text | undefined)?.toString() ?? ''
}

describe('collab: handleUpgrade() refusals', () => {
  let lab: Lab
  let server: CollabServer
  beforeEach(async () => {
    lab = await createLab()
    server = await startCollabServer(lab, { allowedOrigins: undefined })
  })
  afterEach(async () => {
    await server.close()
    lab.handle.close()
  })

  it('answers 401 to an upgrade without a session cookie', async () => {
    const r = await upgradeStatus(server, lab.sheetId, null)
    expect(r.status).toBe(401)
    expect(JSON.parse(r.body).error).toBe('sign in to open this sheet')
  })

  it('answers 401 to a forged or signed-out session', async () => {
    expect((await upgradeStatus(server, lab.sheetId, lab.tokens.editor.slice(0, -4) + 'AAAA')).status).toBe(401)
    const { jwtVerify } = await import('jose')
    const { SECRET } = await import('./support/fixture')
    const { payload } = await jwtVerify(lab.tokens.viewer, SECRET)
    revokeSession(lab.handle.db, payload.jti!, payload.exp!)
    const r = await upgradeStatus(server, lab.sheetId, lab.tokens.viewer)
    expect(r.status).toBe(401)
    expect(JSON.parse(r.body).error).toMatch(/signed out/)
  })

  it('answers 403 to a signed-in person who is not a member of the lab', async () => {
    const r = await upgradeStatus(server, lab.sheetId, lab.tokens.outsider)
    expect(r.status).toBe(403)
    expect(JSON.parse(r.body).error).toMatch(/not a member/)
  })

  it('answers 404 for a sheet that does not exist, and for a path that is not a sheet', async () => {
    expect((await upgradeStatus(server, 'no-such-sheet', lab.tokens.owner)).status).toBe(404)
    expect((await upgradeStatus(server, '', lab.tokens.owner)).status).toBe(404)
  })

  it('answers 403 to a browser page from another origin, and accepts the page served by this host', async () => {
    const foreign = await upgradeStatus(server, lab.sheetId, lab.tokens.editor, { Origin: 'https://evil.example' })
    expect(foreign.status).toBe(403)
    const same = await rawClient(server, lab.sheetId, lab.tokens.editor, { Origin: `http://127.0.0.1:${server.port}` })
    expect(same.isOpen()).toBe(true)
    same.ws.close()
  })

  it('checks Origin against allowedOrigins when the list is given', async () => {
    const listed = await startCollabServer(lab, { allowedOrigins: ['https://penumbra.halvorsen-lab.example'] })
    try {
      expect((await upgradeStatus(listed, lab.sheetId, lab.tokens.editor, { Origin: `http://127.0.0.1:${listed.port}` })).status).toBe(403)
      const ok = await rawClient(listed, lab.sheetId, lab.tokens.editor, { Origin: 'https://penumbra.halvorsen-lab.example' })
      expect(ok.isOpen()).toBe(true)
      ok.ws.close()
    } finally {
      await listed.close()
    }
  })

  it('counts refused upgrades in stats()', async () => {
    await upgradeStatus(server, lab.sheetId, null)
    await upgradeStatus(server, lab.sheetId, lab.tokens.outsider)
    expect(server.collab.stats().counters.upgradesRefused).toBe(2)
    expect(server.collab.stats().connections).toBe(0)
  })
})

describe('collab: readers', () => {
  let lab: Lab
  let server: CollabServer
  const clients: Client[] = []
  const raws: RawClient[] = []
  beforeEach(async () => {
    lab = await createLab()
    server = await startCollabServer(lab)
  })
  afterEach(async () => {
    for (const c of clients.splice(0)) c.destroy()
    for (const r of raws.splice(0)) r.ws.terminate()
    await server.close()
    lab.handle.close()
  })

  it.each(['viewer', 'reviewer'] as const)('a %s receives the live document but its edits never reach others or the database', async (reader) => {
    const editor = connectClient(server, lab.sheetId, lab.tokens.editor)
    const watcher = connectClient(server, lab.sheetId, lab.tokens.editor2)
    const r = connectClient(server, lab.sheetId, lab.tokens[reader])
    clients.push(editor, watcher, r)
    await Promise.all([editor.synced(), watcher.synced(), r.synced()])
    expect(formula(r.doc)).toBe('Eg*2')
    const rowsBefore = storedRows(lab)

    // The reader's stock client sends its local edits as update messages.
    const text = cellsOf(r.doc).get(2).get('source') as Y.Text
    text.insert(0, 'HACK ')
    text.insert(0, 'MORE ')
    await until(() => server.collab.stats().counters.deniedUpdates === 2, 'both reader updates to be refused')
    await until(() => r.denied.length === 1, 'the permission-denied answer')
    expect(r.denied[0]).toMatch(new RegExp(`your role \\(${reader}\\) may read this sheet but not change it`))

    // A later editor change arrives everywhere, the reader's never does.
    const et = cellsOf(editor.doc).get(2).get('source') as Y.Text
    et.insert(et.length, '+1')
    await until(() => formula(watcher.doc) === 'Eg*2+1', 'the editor change at the second editor')
    await until(() => formula(r.doc).endsWith('Eg*2+1'), 'the editor change at the reader')
    expect(formula(editor.doc)).toBe('Eg*2+1')
    expect(storedRows(lab)).toBe(rowsBefore + 1)
    expect(formula(loadDocument(lab.handle.db, lab.sheetId))).toBe('Eg*2+1')
    // Answered once only, and still connected.
    expect(r.denied.length).toBe(1)
    expect(r.provider.wsconnected).toBe(true)
    expect(r.closes).toEqual([])
    expect(server.collab.stats().readers).toBe(1)
  })

  it('a reader update whose message type is a non-minimal varint is understood as a sync message and dropped', async () => {
    const watcher = connectClient(server, lab.sheetId, lab.tokens.editor)
    clients.push(watcher)
    await watcher.synced()
    const viewer = await rawClient(server, lab.sheetId, lab.tokens.viewer)
    raws.push(viewer)
    const rowsBefore = storedRows(lab)
    const base = loadDocument(lab.handle.db, lab.sheetId)
    // 0x80 0x00 is message type 0 (sync), 0x82 0x00 sync type 2 (update): a byte check for 0 and 2 misses both.
    viewer.ws.send(syncFrame(2, appendToFormula(base, ' sneaky'), { typeBytes: 2, syncTypeBytes: 2 }))
    viewer.ws.send(syncFrame(1, appendToFormula(base, ' step2'), { typeBytes: 3 }))
    viewer.ws.send(syncFrame(2, appendToFormula(base, ' plain')))
    await roundTrip(viewer)
    const denied = viewer.frames.map(readServerFrame).filter((f) => f.type === 'denied')
    expect(denied.length).toBe(1)
    expect(server.collab.stats().counters.deniedUpdates).toBe(3)
    expect(viewer.isOpen()).toBe(true)
    expect(storedRows(lab)).toBe(rowsBefore)
    expect(formula(loadDocument(lab.handle.db, lab.sheetId))).toBe('Eg*2')
    expect(formula(watcher.doc)).toBe('Eg*2')
  })

  it('the same non-minimal varint frame from an editor is applied, stored and relayed', async () => {
    const watcher = connectClient(server, lab.sheetId, lab.tokens.editor2)
    clients.push(watcher)
    await watcher.synced()
    const editor = await rawClient(server, lab.sheetId, lab.tokens.editor)
    raws.push(editor)
    const base = loadDocument(lab.handle.db, lab.sheetId)
    editor.ws.send(syncFrame(2, appendToFormula(base, '*3'), { typeBytes: 2, syncTypeBytes: 2 }))
    await until(() => formula(watcher.doc) === 'Eg*2*3', 'the editor update at the watcher')
    expect(formula(loadDocument(lab.handle.db, lab.sheetId))).toBe('Eg*2*3')
    expect(editor.frames.map(readServerFrame).some((f) => f.type === 'denied')).toBe(false)
  })

  it('a reader may publish its own presence and query everyone’s, but not speak for another client id', async () => {
    const editor = connectClient(server, lab.sheetId, lab.tokens.editor)
    clients.push(editor)
    editor.provider.awareness.setLocalStateField('cell', 'cx')
    await editor.synced()
    const viewer = await rawClient(server, lab.sheetId, lab.tokens.viewer)
    raws.push(viewer)
    viewer.ws.send(awarenessFrame([{ clientId: 4242, clock: 1, state: { cell: 'cEg', user: { name: 'Someone Else', color: '#3a6' } } }]))
    await until(() => editor.provider.awareness.getStates().has(4242), 'the viewer presence at the editor')
    // Presence carries the signed-in name, whatever the client claimed.
    expect(editor.provider.awareness.getStates().get(4242)).toMatchObject({ cell: 'cEg', user: { name: 'Lena Fischer', color: '#3a6' } })
    // Pretending to be the editor's client id is refused.
    viewer.ws.send(awarenessFrame([{ clientId: editor.doc.clientID, clock: 999, state: { cell: 'fake' } }]))
    viewer.ws.send(QUERY_AWARENESS_FRAME)
    await until(() => viewer.frames.map(readServerFrame).some((f) => f.type === 'awareness' && f.clients.some((c) => c.clientId === editor.doc.clientID)), 'the presence answer')
    await roundTrip(viewer)
    expect(editor.provider.awareness.getLocalState()).toMatchObject({ cell: 'cx' })
    expect(server.collab.stats().counters.awarenessRefused).toBe(1)
    expect(viewer.isOpen()).toBe(true)
  })
})

describe('collab: membership changes', () => {
  let lab: Lab
  let server: CollabServer
  const clients: Client[] = []
  beforeEach(async () => {
    lab = await createLab()
    server = await startCollabServer(lab)
  })
  afterEach(async () => {
    for (const c of clients.splice(0)) c.destroy()
    await server.close()
    lab.handle.close()
  })

  it('membershipChanged() disconnects a removed member at once (4403) and the next upgrade answers 403', async () => {
    const editor = connectClient(server, lab.sheetId, lab.tokens.editor)
    const other = connectClient(server, lab.sheetId, lab.tokens.editor2)
    clients.push(editor, other)
    await Promise.all([editor.synced(), other.synced()])
    lab.setRole('editor', null)
    server.collab.membershipChanged(lab.labId, lab.userIds.editor)
    await until(() => editor.closes.length === 1, 'the removed member to be disconnected')
    expect(editor.closes[0]).toEqual({ code: CLOSE.removed, reason: 'you are no longer a member of this lab' })
    expect(editor.provider.shouldConnect).toBe(false)
    expect((await upgradeStatus(server, lab.sheetId, lab.tokens.editor)).status).toBe(403)
    expect(other.provider.wsconnected).toBe(true)
  })

  it('membershipChanged() makes a demoted editor read-only at once, still connected', async () => {
    const editor = connectClient(server, lab.sheetId, lab.tokens.editor)
    const watcher = connectClient(server, lab.sheetId, lab.tokens.editor2)
    clients.push(editor, watcher)
    await Promise.all([editor.synced(), watcher.synced()])
    lab.setRole('editor', 'viewer')
    server.collab.membershipChanged(lab.labId, lab.userIds.editor)
    const rows = storedRows(lab)
    ;(cellsOf(editor.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(() => editor.denied.length === 1, 'permission denied for the demoted editor')
    expect(formula(watcher.doc)).toBe('Eg*2')
    expect(storedRows(lab)).toBe(rows)
    expect(editor.provider.wsconnected).toBe(true)
  })

  it('membershipChanged() lets a promoted viewer edit without reconnecting', async () => {
    const viewer = connectClient(server, lab.sheetId, lab.tokens.viewer)
    const watcher = connectClient(server, lab.sheetId, lab.tokens.editor)
    clients.push(viewer, watcher)
    await Promise.all([viewer.synced(), watcher.synced()])
    lab.setRole('viewer', 'editor')
    server.collab.membershipChanged(lab.labId, lab.userIds.viewer)
    await until(() => server.collab.stats().readers === 0, 'the promotion')
    ;(cellsOf(viewer.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(() => formula(watcher.doc) === '2*Eg*2', 'the promoted viewer edit at the editor')
    expect(viewer.closes).toEqual([])
  })

  it('a membership removed without the hook is caught by the periodic recheck, and so is a signed-out session', async () => {
    const quick = await startCollabServer(lab, { recheckMs: 30, sweepMs: 10 })
    try {
      const editor = connectClient(quick, lab.sheetId, lab.tokens.editor)
      const viewer = connectClient(quick, lab.sheetId, lab.tokens.viewer)
      clients.push(editor, viewer)
      await Promise.all([editor.synced(), viewer.synced()])
      lab.setRole('editor', null)
      await until(() => editor.closes.length === 1, 'the recheck to disconnect the removed editor')
      expect(editor.closes[0].code).toBe(CLOSE.removed)
      const { jwtVerify } = await import('jose')
      const { SECRET } = await import('./support/fixture')
      const { payload } = await jwtVerify(lab.tokens.viewer, SECRET)
      revokeSession(lab.handle.db, payload.jti!, payload.exp!)
      await until(() => viewer.closes.length === 1, 'the recheck to close the signed-out session')
      expect(viewer.closes[0]).toEqual({ code: CLOSE.sessionEnded, reason: 'you have signed out; sign in again' })
    } finally {
      await quick.close()
    }
  })

  it('sheetDeleted() closes every connection of that sheet (4404) and leaves other sheets alone', async () => {
    const second = lab.addSheet()
    const a = connectClient(server, lab.sheetId, lab.tokens.editor)
    const b = connectClient(server, second, lab.tokens.editor)
    clients.push(a, b)
    await Promise.all([a.synced(), b.synced()])
    server.collab.sheetDeleted(lab.sheetId)
    await until(() => a.closes.length === 1, 'the close of the deleted sheet')
    expect(a.closes[0].code).toBe(CLOSE.sheetDeleted)
    expect(b.provider.wsconnected).toBe(true)
    expect(server.collab.stats().documents).toBe(1)
  })
})
