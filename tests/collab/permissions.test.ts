// Who may open a sheet, and what a reader's connection may do: upgrades refused before the websocket exists;
// readers' document updates (however their message type is encoded) dropped, counted and denied once, never relayed
// or stored, while the reader stays connected; removed, demoted and promoted members take effect at once.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { revokeSession } from '../../server/services/sessions'
import { CLOSE } from '../../server/collab/index'
import { roundTrip, storedRows, until, upgradeStatus } from './support/fixture'
import { useCollab } from './support/useCollab'
import { QUERY_AWARENESS_FRAME, appendToFormula, awarenessFrame, readServerFrame, syncFrame } from './support/frames'

function formula(doc: Y.Doc): string {
  const cell = cellsOf(doc)
    .toArray()
    .find((m) => m.get('name') === 'x')
  return (cell?.get('source') as Y.Text | undefined)?.toString() ?? ''
}

describe('collab: handleUpgrade() refusals', () => {
  const t = useCollab({ allowedOrigins: undefined })

  it('answers 401 to an upgrade without a session cookie', async () => {
    const r = await upgradeStatus(t.server, t.lab.sheetId, null)
    expect(r.status).toBe(401)
    expect(JSON.parse(r.body).error).toBe('sign in to open this sheet')
  })

  it('answers 401 to a forged or signed-out session', async () => {
    expect((await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.editor.slice(0, -4) + 'AAAA')).status).toBe(401)
    const { jwtVerify } = await import('jose')
    const { SECRET } = await import('./support/fixture')
    const { payload } = await jwtVerify(t.lab.tokens.viewer, SECRET)
    await revokeSession(t.lab.handle.db, payload.jti!, payload.exp!)
    const r = await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.viewer)
    expect(r.status).toBe(401)
    expect(JSON.parse(r.body).error).toMatch(/signed out/)
  })

  it('answers 403 to a signed-in person who is not a member of the lab', async () => {
    const r = await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.outsider)
    expect(r.status).toBe(403)
    expect(JSON.parse(r.body).error).toMatch(/not a member/)
  })

  it('answers 404 for a sheet that does not exist, and for a path that is not a sheet', async () => {
    expect((await upgradeStatus(t.server, 'no-such-sheet', t.lab.tokens.owner)).status).toBe(404)
    expect((await upgradeStatus(t.server, '', t.lab.tokens.owner)).status).toBe(404)
  })

  it('answers 403 to a browser page from another origin, and accepts the page served by this host', async () => {
    const foreign = await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.editor, { Origin: 'https://evil.example' })
    expect(foreign.status).toBe(403)
    const same = await t.raw('editor', { headers: { Origin: `http://127.0.0.1:${t.server.port}` } })
    expect(same.isOpen()).toBe(true)
  })

  it('checks Origin against allowedOrigins when the list is given', async () => {
    const listed = await t.another({ allowedOrigins: ['https://penumbra.halvorsen-lab.example'] })
    expect((await upgradeStatus(listed, t.lab.sheetId, t.lab.tokens.editor, { Origin: `http://127.0.0.1:${listed.port}` })).status).toBe(403)
    const ok = await t.raw('editor', { server: listed, headers: { Origin: 'https://penumbra.halvorsen-lab.example' } })
    expect(ok.isOpen()).toBe(true)
  })

  it('counts refused upgrades in stats()', async () => {
    await upgradeStatus(t.server, t.lab.sheetId, null)
    await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.outsider)
    expect(t.server.collab.stats().counters.upgradesRefused).toBe(2)
    expect(t.server.collab.stats().connections).toBe(0)
  })
})

describe('collab: readers', () => {
  const t = useCollab()

  it.each(['viewer', 'reviewer'] as const)('a %s receives the live document but its edits never reach others or the database', async (reader) => {
    const editor = t.connect('editor')
    const watcher = t.connect('editor2')
    const r = t.connect(reader)
    await Promise.all([editor.synced(), watcher.synced(), r.synced()])
    expect(formula(r.doc)).toBe('Eg*2')
    const rowsBefore = await storedRows(t.lab)

    // The reader's stock client sends its local edits as update messages.
    const text = cellsOf(r.doc).get(2).get('source') as Y.Text
    text.insert(0, 'HACK ')
    text.insert(0, 'MORE ')
    await until(() => t.server.collab.stats().counters.deniedUpdates === 2, 'both reader updates to be refused')
    await until(() => r.denied.length === 1, 'the permission-denied answer')
    expect(r.denied[0]).toMatch(new RegExp(`your role \\(${reader}\\) may read this sheet but not change it`))

    // A later editor change arrives everywhere, the reader's never does.
    const et = cellsOf(editor.doc).get(2).get('source') as Y.Text
    et.insert(et.length, '+1')
    await until(() => formula(watcher.doc) === 'Eg*2+1', 'the editor change at the second editor')
    await until(() => formula(r.doc).endsWith('Eg*2+1'), 'the editor change at the reader')
    expect(formula(editor.doc)).toBe('Eg*2+1')
    expect(await storedRows(t.lab)).toBe(rowsBefore + 1)
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe('Eg*2+1')
    // Answered once only, and still connected.
    expect(r.denied.length).toBe(1)
    expect(r.provider.wsconnected).toBe(true)
    expect(r.closes).toEqual([])
    expect(t.server.collab.stats().readers).toBe(1)
  })

  it('a reader update whose message type is a non-minimal varint is understood as a sync message and dropped', async () => {
    const watcher = t.connect('editor')
    await watcher.synced()
    const viewer = await t.raw('viewer')
    const rowsBefore = await storedRows(t.lab)
    const base = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    // 0x80 0x00 is message type 0 (sync), 0x82 0x00 sync type 2 (update): a byte check for 0 and 2 misses both.
    viewer.ws.send(syncFrame(2, appendToFormula(base, ' sneaky'), { typeBytes: 2, syncTypeBytes: 2 }))
    viewer.ws.send(syncFrame(1, appendToFormula(base, ' step2'), { typeBytes: 3 }))
    viewer.ws.send(syncFrame(2, appendToFormula(base, ' plain')))
    await roundTrip(viewer)
    const denied = viewer.frames.map(readServerFrame).filter((f) => f.type === 'denied')
    expect(denied.length).toBe(1)
    expect(t.server.collab.stats().counters.deniedUpdates).toBe(3)
    expect(viewer.isOpen()).toBe(true)
    expect(await storedRows(t.lab)).toBe(rowsBefore)
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe('Eg*2')
    expect(formula(watcher.doc)).toBe('Eg*2')
  })

  it('the same non-minimal varint frame from an editor is applied, stored and relayed', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    const base = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    editor.ws.send(syncFrame(2, appendToFormula(base, '*3'), { typeBytes: 2, syncTypeBytes: 2 }))
    await until(() => formula(watcher.doc) === 'Eg*2*3', 'the editor update at the watcher')
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe('Eg*2*3')
    expect(editor.frames.map(readServerFrame).some((f) => f.type === 'denied')).toBe(false)
  })

  it('a reader may publish its own presence and query everyone’s, but not speak for another client id', async () => {
    const editor = t.connect('editor')
    editor.provider.awareness.setLocalStateField('cell', 'cx')
    await editor.synced()
    const viewer = await t.raw('viewer')
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
    expect(t.server.collab.stats().counters.awarenessRefused).toBe(1)
    expect(viewer.isOpen()).toBe(true)
  })
})

describe('collab: membership changes', () => {
  const t = useCollab()

  it('membershipChanged() disconnects a removed member at once (4403) and the next upgrade answers 403', async () => {
    const editor = t.connect('editor')
    const other = t.connect('editor2')
    await Promise.all([editor.synced(), other.synced()])
    await t.lab.setRole('editor', null)
    t.server.collab.membershipChanged(t.lab.labId, t.lab.userIds.editor)
    await until(() => editor.closes.length === 1, 'the removed member to be disconnected')
    expect(editor.closes[0]).toEqual({ code: CLOSE.removed, reason: 'you are no longer a member of this lab' })
    expect(editor.provider.shouldConnect).toBe(false)
    expect((await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.editor)).status).toBe(403)
    expect(other.provider.wsconnected).toBe(true)
  })

  it('membershipChanged() makes a demoted editor read-only at once, still connected', async () => {
    const editor = t.connect('editor')
    const watcher = t.connect('editor2')
    await Promise.all([editor.synced(), watcher.synced()])
    await t.lab.setRole('editor', 'viewer')
    t.server.collab.membershipChanged(t.lab.labId, t.lab.userIds.editor)
    const rows = await storedRows(t.lab)
    ;(cellsOf(editor.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(() => editor.denied.length === 1, 'permission denied for the demoted editor')
    expect(formula(watcher.doc)).toBe('Eg*2')
    expect(await storedRows(t.lab)).toBe(rows)
    expect(editor.provider.wsconnected).toBe(true)
  })

  it('membershipChanged() lets a promoted viewer edit without reconnecting', async () => {
    const viewer = t.connect('viewer')
    const watcher = t.connect('editor')
    await Promise.all([viewer.synced(), watcher.synced()])
    await t.lab.setRole('viewer', 'editor')
    t.server.collab.membershipChanged(t.lab.labId, t.lab.userIds.viewer)
    await until(() => t.server.collab.stats().readers === 0, 'the promotion')
    ;(cellsOf(viewer.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(() => formula(watcher.doc) === '2*Eg*2', 'the promoted viewer edit at the editor')
    expect(viewer.closes).toEqual([])
  })

  it('a membership removed without the hook is caught by the periodic recheck, and so is a signed-out session', async () => {
    const quick = await t.another({ recheckMs: 30, sweepMs: 10 })
    const editor = t.connect('editor', { server: quick })
    const viewer = t.connect('viewer', { server: quick })
    await Promise.all([editor.synced(), viewer.synced()])
    await t.lab.setRole('editor', null)
    await until(() => editor.closes.length === 1, 'the recheck to disconnect the removed editor')
    expect(editor.closes[0].code).toBe(CLOSE.removed)
    const { jwtVerify } = await import('jose')
    const { SECRET } = await import('./support/fixture')
    const { payload } = await jwtVerify(t.lab.tokens.viewer, SECRET)
    await revokeSession(t.lab.handle.db, payload.jti!, payload.exp!)
    await until(() => viewer.closes.length === 1, 'the recheck to close the signed-out session')
    expect(viewer.closes[0]).toEqual({ code: CLOSE.sessionEnded, reason: 'you have signed out; sign in again' })
  })

  it('sheetDeleted() closes every connection of that sheet (4404) and leaves other sheets alone', async () => {
    const second = await t.lab.addSheet()
    const a = t.connect('editor')
    const b = t.connect('editor', { sheetId: second })
    await Promise.all([a.synced(), b.synced()])
    t.server.collab.sheetDeleted(t.lab.sheetId)
    await until(() => a.closes.length === 1, 'the close of the deleted sheet')
    expect(a.closes[0].code).toBe(CLOSE.sheetDeleted)
    expect(b.provider.wsconnected).toBe(true)
    expect(t.server.collab.stats().documents).toBe(1)
  })
})
