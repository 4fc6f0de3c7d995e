// Odd but possible frames, decoded as the numbers they encode (never by their bytes): non-minimal varints in every
// field, message types that only look like known ones in their low bits, a reader whose first message is a sync step
// 2, presence for somebody else's client id or too big to keep, frames of exactly the size limit and one byte more,
// and a writer's burst past the rate limit — each handled on its own connection while the others go on.
import { describe, expect, it, vi } from 'vitest'
import * as Y from 'yjs'
import * as encoding from 'lib0/encoding'
import { cellToMap, cellsOf } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { CLOSE, MAX_PAYLOAD } from '../../server/collab/index'
import { MAX_AWARENESS_ENTRIES, MAX_AWARENESS_STATE_CHARS } from '../../server/collab/protocol'
import { DocumentRegistry } from '../../server/collab/registry'
import { roundTrip, storedRows, until, type RawClient } from './support/fixture'
import { QUERY_AWARENESS_FRAME, appendToFormula, awarenessFrame, readServerFrame, syncFrame } from './support/frames'
import { useCollab } from './support/useCollab'

function formula(doc: Y.Doc): string {
  const cell = cellsOf(doc)
    .toArray()
    .find((m) => m.get('name') === 'x')
  return (cell?.get('source') as Y.Text | undefined)?.toString() ?? ''
}

const received = (raw: RawClient) => raw.frames.map(readServerFrame)

describe('collab: varints decoded as numbers', () => {
  const t = useCollab()

  it('answers a reader’s sync step 1 written with non-minimal varints in type, sync type and length', async () => {
    const viewer = await t.raw('viewer')
    const sv = Y.encodeStateVector(new Y.Doc())
    viewer.ws.send(syncFrame(0, sv, { typeBytes: 4, syncTypeBytes: 3, lengthBytes: 5 }))
    await until(() => received(viewer).some((f) => f.type === 'sync-step2'), 'the answer to the odd sync step 1')
    const answer = received(viewer).find((f) => f.type === 'sync-step2') as { payload: Uint8Array }
    const doc = new Y.Doc()
    Y.applyUpdate(doc, answer.payload)
    expect(formula(doc)).toBe('Eg*2')
    expect(viewer.isOpen()).toBe(true)
  })

  it('applies an editor update whose length is a non-minimal varint, and drops the same frame from a reviewer', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const base = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    const reviewer = await t.raw('reviewer')
    reviewer.ws.send(syncFrame(2, appendToFormula(base, '*9'), { lengthBytes: 4, syncTypeBytes: 2 }))
    await roundTrip(reviewer)
    expect(t.server.collab.stats().counters.deniedUpdates).toBe(1)
    expect(received(reviewer).filter((f) => f.type === 'denied').length).toBe(1)
    expect(await storedRows(t.lab)).toBe(0)
    const editor = await t.raw('editor')
    editor.ws.send(syncFrame(2, appendToFormula(base, '*3'), { lengthBytes: 4 }))
    await until(() => formula(watcher.doc) === 'Eg*2*3', 'the editor update at the watcher')
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe('Eg*2*3')
    expect(reviewer.isOpen() && editor.isOpen()).toBe(true)
  })

  it('closes a connection whose message type is 2^32 (0 in its low 32 bits), storing nothing', async () => {
    const base = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    const update = appendToFormula(base, '+7')
    for (const person of ['editor', 'viewer'] as const) {
      const raw = await t.raw(person)
      const inner = syncFrame(2, update)
      raw.ws.send(new Uint8Array([0x80, 0x80, 0x80, 0x80, 0x10, ...inner.subarray(1)]))
      const closed = await raw.closed
      expect(closed.code).toBe(CLOSE.malformed)
      expect(closed.reason).toMatch(/unknown message type 4294967296/)
    }
    // Sync type 2^32 + 2 is not an update either.
    const raw = await t.raw('editor')
    raw.ws.send(new Uint8Array([0, 0x82, 0x80, 0x80, 0x80, 0x10, ...syncFrame(2, update).subarray(2)]))
    expect((await raw.closed).reason).toMatch(/unknown sync message type 4294967298/)
    expect(await storedRows(t.lab)).toBe(0)
    expect(t.server.collab.stats().counters.deniedUpdates).toBe(0)
  })

  it('closes a connection that sends an empty frame or a varint that never ends', async () => {
    const empty = await t.raw('viewer')
    empty.ws.send(new Uint8Array(0))
    expect((await empty.closed).code).toBe(CLOSE.malformed)
    const endless = await t.raw('editor')
    endless.ws.send(new Uint8Array(Array.from({ length: 12 }, () => 0x80)))
    expect((await endless.closed).code).toBe(CLOSE.malformed)
    const ok = t.connect('editor2')
    await ok.synced()
    expect(formula(ok.doc)).toBe('Eg*2')
  })
})

describe('collab: readers on the wire', () => {
  const t = useCollab()

  it('closes a connection whose presence is nested thousands deep (re-encoding it would overflow the stack), and the server goes on', async () => {
    const editor = t.connect('editor')
    await editor.synced()
    const viewer = await t.raw('viewer')
    const depth = 6000
    const json = '{"a":' + '['.repeat(depth) + ']'.repeat(depth) + '}'
    const inner = encoding.createEncoder()
    encoding.writeVarUint(inner, 1)
    encoding.writeVarUint(inner, 9001)
    encoding.writeVarUint(inner, 1)
    encoding.writeVarString(inner, json)
    const outer = encoding.createEncoder()
    encoding.writeVarUint(outer, 1)
    encoding.writeVarUint8Array(outer, encoding.toUint8Array(inner))
    viewer.ws.send(encoding.toUint8Array(outer))
    const closed = await viewer.closed
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/nested/)
    ;(cellsOf(editor.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(async () => await storedRows(t.lab) === 1, 'the editor to go on')
    expect(editor.closes).toEqual([])
  })

  it('drops a reader’s sync step 2 sent as its very first message, answers it once, and keeps the reader', async () => {
    const watcher = t.connect('editor')
    await watcher.synced()
    const base = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    const viewer = await t.raw('viewer')
    viewer.ws.send(syncFrame(1, appendToFormula(base, ' first')))
    viewer.ws.send(syncFrame(1, appendToFormula(base, ' second')))
    await roundTrip(viewer)
    expect(received(viewer).filter((f) => f.type === 'denied')).toEqual([{ type: 'denied', reason: 'your role (viewer) may read this sheet but not change it' }])
    expect(t.server.collab.stats().counters.deniedUpdates).toBe(2)
    expect(await storedRows(t.lab)).toBe(0)
    expect(formula(watcher.doc)).toBe('Eg*2')
    // The sync step 2 the reader got back carries the document without its change.
    const answer = received(viewer).find((f) => f.type === 'sync-step2') as { payload: Uint8Array }
    const doc = new Y.Doc()
    Y.applyUpdate(doc, answer.payload)
    expect(formula(doc)).toBe('Eg*2')
    expect(viewer.isOpen()).toBe(true)
  })

  it('echoes a reader’s own presence back to it (what keeps a silent reader’s link alive), renewals included', async () => {
    const viewer = await t.raw('viewer')
    viewer.ws.send(awarenessFrame([{ clientId: 5151, clock: 1, state: { cell: 'cx' } }]))
    await until(() => received(viewer).some((f) => f.type === 'awareness' && f.clients.some((c) => c.clientId === 5151 && c.clock === 1)), 'the echo')
    // The stock client renews the same state every 15 s with a higher clock.
    viewer.ws.send(awarenessFrame([{ clientId: 5151, clock: 2, state: { cell: 'cx' } }]))
    await until(() => received(viewer).some((f) => f.type === 'awareness' && f.clients.some((c) => c.clientId === 5151 && c.clock === 2)), 'the renewal echo')
    expect(viewer.isOpen()).toBe(true)
  })

  it('lets a reader speak only for the first client id it announced: a second id, even a free one, is refused', async () => {
    const editor = t.connect('editor')
    // A state at clock 0 (the stock client's initial {}) is ignored by y-protocols everywhere: set one at clock 1.
    editor.provider.awareness.setLocalStateField('cell', 'cx')
    await editor.synced()
    const viewer = await t.raw('viewer')
    viewer.ws.send(awarenessFrame([{ clientId: 7001, clock: 1, state: { cell: 'cd' } }]))
    await until(() => editor.provider.awareness.getStates().has(7001), 'the reader presence at the editor')
    viewer.ws.send(awarenessFrame([{ clientId: 7002, clock: 1, state: { cell: 'cEg' } }]))
    // Removing somebody else's presence is refused too.
    viewer.ws.send(awarenessFrame([{ clientId: editor.doc.clientID, clock: 1_000_000, state: null }]))
    await roundTrip(viewer)
    expect(t.server.collab.stats().counters.awarenessRefused).toBe(2)
    expect(editor.provider.awareness.getStates().has(7002)).toBe(false)
    viewer.ws.send(QUERY_AWARENESS_FRAME)
    await until(
      () => received(viewer).some((f) => f.type === 'awareness' && f.clients.some((c) => c.clientId === editor.doc.clientID && c.state !== null)),
      'the editor presence, still there',
    )
    expect(viewer.isOpen()).toBe(true)
  })

  it('closes a connection whose presence is too big or not a JSON object, and only that one', async () => {
    const editor = t.connect('editor')
    await editor.synced()
    const big = await t.raw('viewer')
    big.ws.send(awarenessFrame([{ clientId: 8001, clock: 1, state: { note: 'x'.repeat(MAX_AWARENESS_STATE_CHARS) } }]))
    const bigClosed = await big.closed
    expect(bigClosed.code).toBe(CLOSE.malformed)
    expect(bigClosed.reason).toMatch(/awareness state of \d+ characters/)

    const notJson = await t.raw('reviewer')
    const inner = [1, 0x81, 0x3f, 1, 3, ...new TextEncoder().encode('{x:')]
    notJson.ws.send(new Uint8Array([1, inner.length, ...inner]))
    expect((await notJson.closed).reason).toMatch(/not JSON/)

    const list = await t.raw('viewer')
    list.ws.send(awarenessFrame([{ clientId: 8003, clock: 1, state: [1, 2] }]))
    expect((await list.closed).reason).toMatch(/object or null/)

    const many = await t.raw('viewer')
    many.ws.send(awarenessFrame(Array.from({ length: MAX_AWARENESS_ENTRIES + 1 }, (_, i) => ({ clientId: 20_000 + i, clock: 1, state: null }))))
    expect((await many.closed).reason).toMatch(new RegExp(`lists ${MAX_AWARENESS_ENTRIES + 1} clients`))

    expect(editor.provider.awareness.getStates().has(8001)).toBe(false)
    expect(editor.closes).toEqual([])
    ;(cellsOf(editor.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(async () => await storedRows(t.lab) === 1, 'the editor to go on')
  })
})

/** A document update (a note cell of one long text) that, framed as a sync update message, is exactly `size` bytes. */
function updateFramedAs(size: number): Uint8Array {
  let pad = size - 128
  for (let i = 0; i < 8; i++) {
    const doc = new Y.Doc()
    cellsOf(doc).push([cellToMap({ kind: 'note', text: 'p'.repeat(pad) }, 'pad')])
    const frame = syncFrame(2, Y.encodeStateAsUpdate(doc))
    if (frame.length === size) return frame
    pad += size - frame.length
  }
  throw new Error(`could not build a frame of ${size} bytes`)
}

describe('collab: the size limit', () => {
  const t = useCollab()

  it(`accepts an update framed in exactly maxPayload (${MAX_PAYLOAD} bytes), stores and relays it`, async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    const frame = updateFramedAs(MAX_PAYLOAD)
    expect(frame.length).toBe(MAX_PAYLOAD)
    editor.ws.send(frame)
    const padText = () => cellsOf(watcher.doc).toArray().find((m) => m.get('id') === 'pad')?.get('text')
    await until(() => padText() instanceof Y.Text, 'the padded update at the watcher', 15_000)
    expect((padText() as Y.Text).length).toBeGreaterThan(MAX_PAYLOAD - 128)
    expect(await storedRows(t.lab)).toBe(1)
    expect(editor.isOpen()).toBe(true)
  })

  it('closes with 1009 a frame of maxPayload + 1 bytes, stores nothing, and the others go on', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    editor.ws.send(updateFramedAs(MAX_PAYLOAD + 1))
    const closed = await editor.closed
    expect(closed.code).toBe(CLOSE.tooBig)
    expect(t.server.collab.stats().counters.oversizeFrames).toBe(1)
    expect(await storedRows(t.lab)).toBe(0)
    ;(cellsOf(watcher.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(async () => await storedRows(t.lab) === 1, 'the watcher edit stored')
    expect(watcher.closes).toEqual([])
  })

  it('closes with 1009 a message sent in fragments that add up to more than maxPayload', async () => {
    const editor = await t.raw('editor')
    const part = new Uint8Array(MAX_PAYLOAD / 2)
    editor.ws.send(part, { fin: false })
    editor.ws.send(part, { fin: false })
    editor.ws.send(new Uint8Array(16), { fin: true })
    expect((await editor.closed).code).toBe(CLOSE.tooBig)
    const other = t.connect('viewer')
    await other.synced()
  })
})

describe('collab: a writer over its rate limit', () => {
  const t = useCollab({ rateLimit: { messageBurst: 20, messagesPerSecond: 0.5 } })

  it('stores and relays exactly the updates before the limit, closes the writer with 1008, and a reload matches', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    // One local document typing 40 keystrokes, each sent as its own update the moment it is made.
    const local = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    const frames: Uint8Array[] = []
    local.on('update', (u: Uint8Array) => frames.push(syncFrame(2, u)))
    const text = cellsOf(local).get(2).get('source') as Y.Text
    for (let i = 0; i < 40; i++) text.insert(text.length, String.fromCharCode(97 + (i % 26)))
    for (const f of frames) editor.ws.send(f)
    const closed = await editor.closed
    expect(closed).toEqual({ code: CLOSE.rateLimited, reason: 'too many messages; slow down' })
    // The burst allows 20 messages (a little refill at 0.5/s while they arrive may add one).
    await until(() => formula(watcher.doc).length >= 'Eg*2'.length + 20, 'the accepted keystrokes at the watcher')
    const accepted = formula(watcher.doc).length - 'Eg*2'.length
    expect(accepted).toBeGreaterThanOrEqual(20)
    expect(accepted).toBeLessThanOrEqual(21)
    expect(formula(watcher.doc)).toBe('Eg*2' + 'abcdefghijklmnopqrstuvwxyzabcdefghijklmn'.slice(0, accepted))
    expect(await storedRows(t.lab)).toBe(accepted)
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe(formula(watcher.doc))
    expect(watcher.closes).toEqual([])
  })
})

/** A v1 update of one item under meta.k (new client 4242) whose content (ref 2 JSON, ref 8 any) `write` puts down. */
function rawItemUpdate(contentRef: 2 | 8, write: (e: encoding.Encoder) => void): Uint8Array {
  const e = encoding.createEncoder()
  encoding.writeVarUint(e, 1) // one client's structs
  encoding.writeVarUint(e, 1) // one struct
  encoding.writeVarUint(e, 4242) // client
  encoding.writeVarUint(e, 0) // clock
  encoding.writeUint8(e, contentRef | 0x20) // content ref, parentSub present, no origins: parent follows
  encoding.writeVarUint(e, 1) // the parent is a root type, by name
  encoding.writeVarString(e, 'meta')
  encoding.writeVarString(e, 'k')
  write(e)
  encoding.writeVarUint(e, 0) // empty delete set
  return encoding.toUint8Array(e)
}

describe('collab: deeply nested values in a writer’s update', () => {
  const t = useCollab({ idleCompactMs: 20, sweepMs: 10 })

  it.each([
    ['JSON content 5,000 deep (readable, not writable back)', rawItemUpdate(2, (e) => {
      encoding.writeVarUint(e, 1)
      encoding.writeVarString(e, '['.repeat(5000) + ']'.repeat(5000))
    })],
    ['any content 3,000 deep', rawItemUpdate(8, (e) => {
      encoding.writeVarUint(e, 1)
      for (let i = 0; i < 3000; i++) {
        encoding.writeUint8(e, 117)
        encoding.writeVarUint(e, 1)
      }
      encoding.writeUint8(e, 117)
      encoding.writeVarUint(e, 0)
    })],
  ])('refuses %s and closes the writer, so the document stays encodable for everyone', async (_label, update) => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    expect(Y.decodeUpdate(update).structs.length).toBe(1)
    const editor = await t.raw('editor')
    editor.ws.send(syncFrame(2, update))
    const closed = await editor.closed
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/nested more than 64 levels/)
    expect(await storedRows(t.lab)).toBe(0)
    // The document still encodes: an edit is stored, compacted when idle, and a newcomer syncs it. The row may be
    // compacted between two polls (20 ms idle), so the wait is on the compaction count and the stored document.
    const compactions = () => t.server.collab.stats().counters.compactions
    const before = compactions()
    ;(cellsOf(watcher.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(() => compactions() > before, 'the idle compaction of the edit')
    await until(async () => await storedRows(t.lab) === 0, 'the log emptied by the compaction')
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe('2*Eg*2')
    const late = t.connect('viewer')
    await late.synced()
    expect(formula(late.doc)).toBe('2*Eg*2')
    expect(late.doc.getMap('meta').has('k')).toBe(false)
  })

  it('accepts a spectrum cell’s columns (a few levels of objects over long arrays)', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const local = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    const before = Y.encodeStateVector(local)
    const cell = new Y.Map<unknown>()
    cell.set('id', 'cs')
    cell.set('kind', 'spectrum')
    cell.set('name', 'measured')
    cell.set('columns', { wavelength: { unit: 'nm', values: Array.from({ length: 5000 }, (_, i) => 300 + i / 10) } })
    cellsOf(local).push([cell])
    const editor = await t.raw('editor')
    editor.ws.send(syncFrame(2, Y.encodeStateAsUpdate(local, before)))
    await until(() => cellsOf(watcher.doc).length === 5, 'the spectrum at the watcher')
    expect(editor.isOpen()).toBe(true)
  })
})

describe('collab: a failing fan-out to other instances', () => {
  let busDown = false
  const t = useCollab({
    bus: {
      publish() {
        if (busDown) throw new Error('the bus is down')
      },
      subscribe: () => () => {},
    },
  })

  it('costs only the other instances: presence and edits still reach the clients of this instance and the database', async () => {
    const editor = t.connect('editor')
    const watcher = t.connect('editor2')
    await Promise.all([editor.synced(), watcher.synced()])
    const viewer = await t.raw('viewer')
    busDown = true
    viewer.ws.send(awarenessFrame([{ clientId: 4100, clock: 1, state: { cell: 'cx' } }]))
    ;(cellsOf(editor.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(async () => await storedRows(t.lab) === 1, 'the edit to be stored')
    await until(() => (cellsOf(watcher.doc).get(2).get('source') as Y.Text).toString().startsWith('2*'), 'the edit at the other editor')
    const stats = t.server.collab.stats()
    expect(stats.counters.busFailures).toBeGreaterThanOrEqual(2)
    expect(stats.counters.storeFailures).toBe(0)
    expect(stats.counters.unexpectedFailures).toBe(0)
    expect(viewer.isOpen()).toBe(true)
    expect(editor.closes).toEqual([])
    busDown = false
  })
})

describe('collab: a failure while handling one message', () => {
  const t = useCollab()

  it('closes only the connection whose message could not be handled (1011) and the server goes on', async () => {
    const editor = t.connect('editor')
    await editor.synced()
    const viewer = await t.raw('viewer')
    // A bug in the registry, simulated: the next presence message throws while it is handled.
    const spy = vi.spyOn(DocumentRegistry.prototype, 'applyAwareness').mockImplementationOnce(() => {
      throw new Error('simulated fault')
    })
    try {
      viewer.ws.send(awarenessFrame([{ clientId: 4100, clock: 1, state: { cell: 'cx' } }]))
      const closed = await viewer.closed
      expect(closed).toEqual({ code: CLOSE.saveFailed, reason: 'the server could not handle this message; reconnecting' })
    } finally {
      spy.mockRestore()
    }
    expect(t.server.collab.stats().counters.unexpectedFailures).toBe(1)
    expect(t.server.collab.stats().connections).toBe(1)
    ;(cellsOf(editor.doc).get(2).get('source') as Y.Text).insert(0, '2*')
    await until(async () => await storedRows(t.lab) === 1, 'the editor to go on')
    expect(editor.closes).toEqual([])
  })
})
