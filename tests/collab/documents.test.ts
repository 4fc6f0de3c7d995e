// A sheet's live document across the log's life: an update that arrives before the one it builds on is kept (on disk
// too, across compaction and a restart) until the missing one comes; a late joiner after compaction, or after the
// document was evicted and loaded again, gets all of it; the stock client edits through a server restart and
// reconnects with what it typed meanwhile.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile } from '../../shared/doc/sheetDoc'
import { loadDocument, readStoredUpdates } from '../../server/services/documents'
import { CLOSE } from '../../server/collab/index'
import { storedRows, until } from './support/fixture'
import { syncFrame } from './support/frames'
import { useCollab } from './support/useCollab'

function text(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}

/** The formula's text, or '' while the document has not arrived. */
function formula(doc: Y.Doc): string {
  return cellsOf(doc).length > 2 ? text(doc).toString() : ''
}

/** Two updates of one writer, the second building on the first: "+1" then "+2" at the end of formula x. */
function dependentPair(base: Y.Doc): [Uint8Array, Uint8Array] {
  const doc = new Y.Doc()
  Y.applyUpdate(doc, Y.encodeStateAsUpdate(base))
  const out: Uint8Array[] = []
  doc.on('update', (u: Uint8Array) => out.push(u))
  text(doc).insert(text(doc).length, '+1')
  text(doc).insert(text(doc).length, '+2')
  return [out[0], out[1]]
}

describe('collab: an update before the one it builds on', () => {
  const t = useCollab()

  // Where such an update would land cannot be checked, so it is refused; the stock client's next sync sends what
  // the server lacks together with what builds on it.
  it('refuses it with 1007 (nothing stored or relayed); the two sent in order are stored and relayed', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const [first, second] = dependentPair(await loadDocument(t.lab.handle.db, t.lab.sheetId))
    const early = await t.raw('editor')
    early.ws.send(syncFrame(2, second))
    const closed = await early.closed
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/builds on changes this server does not have/)
    expect(await storedRows(t.lab)).toBe(0)
    const editor = await t.raw('editor')
    editor.ws.send(syncFrame(2, first))
    editor.ws.send(syncFrame(2, second))
    await until(() => text(watcher.doc).toString() === 'Eg*2+1+2', 'both updates at the watcher')
    expect(text(await loadDocument(t.lab.handle.db, t.lab.sheetId)).toString()).toBe('Eg*2+1+2')
    expect(editor.isOpen()).toBe(true)
  })
})

describe('collab: late joiners', () => {
  const t = useCollab({ compactEvery: 20, idleCompactMs: 30, evictAfterMs: 60, sweepMs: 10 })

  it('a client joining after several compactions gets the whole document, identical to the writers’', async () => {
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    // Three rounds of typing, each compacted before the next (a database that commits a burst as one group compacts
    // once per burst).
    for (let i = 0; i < 150; i++) {
      if (i % 2) text(a.doc).insert(text(a.doc).length, 'a')
      else text(b.doc).insert(0, 'b')
      if (i % 30 === 29) text(a.doc).delete(1, 2)
      if (i % 10 === 0) await new Promise((r) => setTimeout(r, 1))
      if (i % 50 === 49) await until(() => t.server.collab.stats().counters.compactions >= (i + 1) / 50, 'a compaction after each round')
    }
    await until(() => text(a.doc).toString() === text(b.doc).toString() && text(a.doc).length === 4 + 150 - 10, 'the writers to agree')
    const late = t.connect('reviewer')
    await late.synced()
    expect(text(late.doc).toString()).toBe(text(a.doc).toString())
    expect(docToSheetFile(late.doc)).toEqual(docToSheetFile(a.doc))
    expect(Y.encodeStateVector(late.doc)).toEqual(Y.encodeStateVector(a.doc))
    expect((await readStoredUpdates(t.lab.handle.db, t.lab.sheetId)).updates.length).toBeLessThan(40)
  })

  it('a document evicted from memory loads again for the next connection with every edit, and takes new ones', async () => {
    const a = t.connect('editor')
    await a.synced()
    text(a.doc).insert(0, '2*')
    // stored as a row, or already compacted (30 ms idle can pass between two polls): read the stored document
    await until(async () => text(await loadDocument(t.lab.handle.db, t.lab.sheetId)).toString() === '2*Eg*2', 'the edit stored')
    a.destroy()
    t.forget(a)
    await until(() => t.server.collab.stats().documents === 0, 'the eviction')
    expect(await storedRows(t.lab)).toBe(0)
    const b = t.connect('editor2')
    await b.synced()
    expect(text(b.doc).toString()).toBe('2*Eg*2')
    text(b.doc).insert(text(b.doc).length, '+1')
    const c = t.connect('viewer')
    await until(() => formula(c.doc) === '2*Eg*2+1', 'the new edit at a third client')
    expect(t.server.collab.stats().counters.documentsLoaded).toBe(2)
  })
})

describe('collab: the stock client through a server restart', () => {
  const t = useCollab()

  it('reconnects by itself after the server stops (1001) and comes back on the same port, sending what was typed meanwhile', async () => {
    const port = t.server.port
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    text(a.doc).insert(0, 'online ')
    await until(() => text(b.doc).toString() === 'online Eg*2', 'the first edit')
    await t.server.close()
    await until(() => a.closes.length > 0 && b.closes.length > 0, 'both to see the close')
    expect(a.closes[0].code).toBe(CLOSE.goingAway)
    expect(a.provider.shouldConnect).toBe(true)
    // Typed while the server is down.
    text(a.doc).insert(text(a.doc).length, ' +offline')
    text(b.doc).insert(0, '(b)')
    await t.another({}, port)
    await until(() => a.provider.wsconnected && b.provider.wsconnected && a.provider.synced && b.provider.synced, 'both to reconnect', 10_000)
    const expected = '(b)online Eg*2 +offline'
    await until(() => text(a.doc).toString() === expected && text(b.doc).toString() === expected, 'the offline edits to cross', 10_000)
    await until(async () => text(await loadDocument(t.lab.handle.db, t.lab.sheetId)).toString() === expected, 'the offline edits stored')
  })
})
