// Bad frames close only the connection that sent them, with a close code and a reason; the server, the document
// and everyone else carry on.
import { beforeEach, describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { CLOSE } from '../../server/collab/index'
import { storedRows, until, type Client } from './support/fixture'
import { useCollab } from './support/useCollab'
import { QUERY_AWARENESS_FRAME, appendToFormula, readServerFrame, syncFrame, syncStep1Frame } from './support/frames'

function formula(doc: Y.Doc): string {
  return ((cellsOf(doc).get(2).get('source') as Y.Text) ?? '').toString()
}

describe('collab: malformed and oversize frames', () => {
  const t = useCollab({ rateLimit: { messageBurst: 50, messagesPerSecond: 10 } })
  let a: Client
  let b: Client

  beforeEach(async () => {
    a = t.connect('editor')
    b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
  })

  /** After a bad frame: the two editors still exchange edits, and a fresh client still syncs. */
  async function othersCarryOn(tag: string) {
    const ta = cellsOf(a.doc).get(2).get('source') as Y.Text
    ta.insert(ta.length, tag)
    await until(() => formula(b.doc).endsWith(tag), `edit ${tag} to reach the other editor`)
    const fresh = t.connect('owner')
    await fresh.synced()
    expect(formula(fresh.doc)).toBe(formula(a.doc))
    expect(a.closes).toEqual([])
    expect(b.closes).toEqual([])
  }

  async function sendAndClose(frame: Uint8Array | string, person: 'editor' | 'viewer' = 'editor') {
    const raw = await t.raw(person)
    raw.ws.send(frame)
    return raw.closed
  }

  it('closes a connection that sends random bytes with 1007 and the reason', async () => {
    // 0xff… never ends a varint: the message type itself cannot be read.
    const closed = await sendAndClose(new Uint8Array([0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x13, 0x37]))
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/^malformed message: /)
    expect(t.server.collab.stats().counters.malformedFrames).toBe(1)
    await othersCarryOn('+1')
  })

  it('closes a connection whose update is truncated, storing nothing from it', async () => {
    const rows = await storedRows(t.lab)
    const full = syncFrame(2, appendToFormula(await loadDocument(t.lab.handle.db, t.lab.sheetId), '*7'))
    const closed = await sendAndClose(full.subarray(0, full.length - 5))
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/declares \d+ bytes but only \d+ follow/)
    expect(await storedRows(t.lab)).toBe(rows)
    expect(formula(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe('Eg*2')
    await othersCarryOn('+2')
  })

  it('closes a connection whose well-framed update is not a Yjs update', async () => {
    const rows = await storedRows(t.lab)
    const closed = await sendAndClose(syncFrame(2, new Uint8Array([5, 1, 200, 0x99, 7, 7, 7])))
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/malformed document update/)
    expect(await storedRows(t.lab)).toBe(rows)
    await othersCarryOn('+3')
  })

  it('closes a connection that sends trailing bytes, an unknown message type or an unknown sync type', async () => {
    const trailing = new Uint8Array([...syncStep1Frame(), 0, 0])
    expect((await sendAndClose(trailing)).reason).toMatch(/2 unexpected trailing bytes/)
    expect((await sendAndClose(new Uint8Array([9]))).reason).toMatch(/unknown message type 9/)
    expect((await sendAndClose(new Uint8Array([0, 5, 0]))).reason).toMatch(/unknown sync message type 5/)
    expect(t.server.collab.stats().counters.malformedFrames).toBe(3)
    await othersCarryOn('+4')
  })

  it('closes a reader that sends a broken frame too (decoded before the role check)', async () => {
    const closed = await sendAndClose(new Uint8Array([0, 2, 0x85]), 'viewer')
    expect(closed.code).toBe(CLOSE.malformed)
    await othersCarryOn('+5')
  })

  it('closes a connection that sends a text frame with 1003', async () => {
    const closed = await sendAndClose('{"hello":"server"}')
    expect(closed.code).toBe(CLOSE.unsupportedData)
    expect(closed.reason).toMatch(/text frames/)
    await othersCarryOn('+6')
  })

  it('closes a connection that sends a frame over 2 MiB with 1009', async () => {
    const big = new Uint8Array(3 * 1024 * 1024)
    big[0] = 0
    const closed = await sendAndClose(big)
    expect(closed.code).toBe(CLOSE.tooBig)
    expect(t.server.collab.stats().counters.oversizeFrames).toBe(1)
    await othersCarryOn('+7')
  })

  it('accepts an update just under the limit (a large dataset column) and relays it', async () => {
    const doc = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    const before = Y.encodeStateVector(doc)
    const values = Array.from({ length: 60_000 }, (_, i) => 300 + i * 0.01)
    const spectrum = new Y.Map<unknown>()
    spectrum.set('id', 'cspec')
    spectrum.set('kind', 'spectrum')
    spectrum.set('name', 'filmB')
    spectrum.set('columns', { wavelength: { unit: 'nm', values } })
    cellsOf(doc).push([spectrum])
    const update = Y.encodeStateAsUpdate(doc, before)
    expect(update.length).toBeGreaterThan(500_000)
    expect(update.length).toBeLessThan(2 * 1024 * 1024)
    const raw = await t.raw('editor')
    raw.ws.send(syncFrame(2, update))
    await until(() => cellsOf(b.doc).length === 5, 'the spectrum cell at the other editor', 10_000)
    expect(raw.isOpen()).toBe(true)
  })

  it('closes a connection that goes over its message rate with 1008, leaving the rest alone', async () => {
    const raw = await t.raw('viewer')
    for (let i = 0; i < 200; i++) raw.ws.send(QUERY_AWARENESS_FRAME)
    const closed = await raw.closed
    expect(closed.code).toBe(CLOSE.rateLimited)
    expect(closed.reason).toBe('too many messages; slow down')
    expect(t.server.collab.stats().counters.rateLimited).toBe(1)
    await othersCarryOn('+8')
  })

  it('answers ten sync requests in a burst and closes a connection that keeps asking (each answer is the whole document)', async () => {
    const raw = await t.raw('viewer')
    for (let i = 0; i < 10; i++) raw.ws.send(syncStep1Frame())
    await until(() => raw.frames.filter((f) => readServerFrame(f).type === 'sync-step2').length === 10, 'ten answers')
    expect(raw.isOpen()).toBe(true)
    for (let i = 0; i < 5; i++) raw.ws.send(syncStep1Frame())
    const closed = await raw.closed
    expect(closed).toEqual({ code: CLOSE.rateLimited, reason: 'too many sync requests; slow down' })
    await othersCarryOn('+9')
  })
})
