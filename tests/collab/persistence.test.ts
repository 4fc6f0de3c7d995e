// The update log: every accepted update is stored before it is relayed; the log is compacted as it grows and when a
// sheet goes idle; a reload from the database gives the very same document; a refused store is never relayed.
import { describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { sheets, sheetUpdates } from '../../server/db/tables'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile, sheetFileToDoc } from '../../shared/doc/sheetDoc'
import { loadDocument, readStoredUpdates } from '../../server/services/documents'
import { CLOSE, createMemoryBus } from '../../server/collab/index'
import { buildDocument } from '../../server/collab/store'
import { DEMO_SHEET, storedRows, until } from './support/fixture'
import { useCollab } from './support/useCollab'
import { ON_POSTGRES, sqliteOnly } from '../utils/db'

function formulaText(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}

/** True when `a` holds everything `b` holds: applying b's state to a copy of a changes nothing. */
function contains(a: Y.Doc, b: Y.Doc): boolean {
  const copy = new Y.Doc()
  Y.applyUpdate(copy, Y.encodeStateAsUpdate(a))
  const before = Y.encodeStateAsUpdate(copy)
  Y.applyUpdate(copy, Y.encodeStateAsUpdate(b))
  return Buffer.from(Y.encodeStateAsUpdate(copy)).equals(Buffer.from(before))
}

describe('collab: update log', () => {
  const t = useCollab({ start: false })

  it('compacts about every 500 rows while thousands of updates arrive (no pause asked for), and a reload gives an identical document', async () => {
    await t.start({ rateLimit: { messagesPerSecond: 1e6, messageBurst: 1e6 }, compactPauseMs: 0 })
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    const ta = formulaText(a.doc)
    const tb = formulaText(b.doc)
    let maxRows = 0
    const N = 3000
    for (let i = 0; i < N; i++) {
      if (i % 2 === 0) ta.insert(ta.length, 'a')
      else tb.insert(0, 'b')
      // Deletions too, so the delete set is exercised by compaction.
      if (i % 100 === 99) ta.delete(0, 1)
      if (i % 50 === 0) {
        await new Promise((r) => setTimeout(r, 0))
        maxRows = Math.max(maxRows, await storedRows(t.lab))
      }
    }
    const length = 'Eg*2'.length + N - N / 100
    await until(() => ta.length === length && tb.length === length, 'every keystroke at both editors', 20_000)
    await until(() => t.server.collab.stats().counters.rowsStored >= N + N / 100, 'every update to be stored', 20_000)
    expect(ta.toString()).toBe(tb.toString())
    const stats = t.server.collab.stats()
    expect(stats.counters.compactions).toBeGreaterThanOrEqual(5)
    // Never the whole history in the log: bounded by the compaction threshold plus one flush's batch.
    expect(maxRows).toBeLessThan(1000)
    const stored = await readStoredUpdates(t.lab.handle.db, t.lab.sheetId)
    expect(stored.uptoSeq).toBeGreaterThan(0)
    expect(stored.updates.length).toBeLessThan(500)

    const reloaded = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    expect(docToSheetFile(reloaded)).toEqual(docToSheetFile(a.doc))
    expect(Y.encodeStateVector(reloaded)).toEqual(Y.encodeStateVector(a.doc))
    expect(contains(reloaded, a.doc) && contains(a.doc, reloaded)).toBe(true)
    expect(formulaText(reloaded).toString()).toBe(ta.toString())
  })

  it.skipIf(ON_POSTGRES)(
    sqliteOnly('under constant typing the log waits for a pause, or for four times the threshold, before it is compacted'),
    async () => {
      // compactEvery 100: typing without a pause compacts only when the log reaches 400 rows (COMPACT_LIMIT_FACTOR);
      // a pause of compactPauseMs then compacts what has grown past 100 rows, at the next sweep.
      await t.start({ rateLimit: { messagesPerSecond: 1e6, messageBurst: 1e6 }, compactEvery: 100, compactPauseMs: 1500, sweepMs: 20 })
      const a = t.connect('editor')
      await a.synced()
      const ta = formulaText(a.doc)
      const compactions = () => t.server.collab.stats().counters.compactions
      const rowsStored = () => t.server.collab.stats().counters.rowsStored
      // 250 keystrokes about 2 ms apart: past the threshold, short of the limit, and no pause.
      for (let i = 0; i < 250; i++) {
        ta.insert(ta.length, 'x')
        await new Promise((r) => setTimeout(r, 2))
      }
      await until(() => rowsStored() >= 250, 'the first 250 rows to be stored')
      expect(compactions()).toBe(0)
      expect(await storedRows(t.lab)).toBe(250)
      // On without a pause: compacted at once when the log reaches 400 rows.
      let maxRows = 0
      for (let i = 0; i < 200; i++) {
        ta.insert(ta.length, 'y')
        if (i % 10 === 9) {
          await new Promise((r) => setTimeout(r, 2))
          maxRows = Math.max(maxRows, await storedRows(t.lab))
        }
      }
      await until(() => rowsStored() >= 450, 'every row to be stored')
      expect(compactions()).toBe(1)
      expect(maxRows).toBeLessThan(450)
      expect(await storedRows(t.lab)).toBeLessThan(100)
      // Past the threshold again, then a pause: compacted without waiting for the sheet to go idle (10 s).
      for (let i = 0; i < 120; i++) ta.insert(ta.length, 'z')
      await until(() => rowsStored() >= 570, 'the last rows to be stored')
      expect(await storedRows(t.lab)).toBeGreaterThanOrEqual(100)
      await until(async () => (await storedRows(t.lab)) === 0, 'the pause to compact the log', 5000)
      expect(compactions()).toBe(2)
      const reloaded = await loadDocument(t.lab.handle.db, t.lab.sheetId)
      expect(formulaText(reloaded).toString()).toBe(ta.toString())
    },
  )

  it('compacts an idle sheet, evicts it once nobody is connected, and loads it again on the next connection', async () => {
    await t.start({ idleCompactMs: 40, evictAfterMs: 80, sweepMs: 10 })
    const a = t.connect('editor')
    await a.synced()
    const compactions = () => t.server.collab.stats().counters.compactions
    formulaText(a.doc).insert(0, '2*')
    // The row may be compacted between two polls (40 ms idle): wait on the compaction count, then the emptied log.
    await until(() => compactions() === 1, 'the idle compaction')
    await until(async () => await storedRows(t.lab) === 0, 'the log emptied by the compaction')
    expect(formulaText(await loadDocument(t.lab.handle.db, t.lab.sheetId)).toString()).toBe('2*Eg*2')
    expect(t.server.collab.stats().documents).toBe(1)
    a.destroy()
    t.forget(a)
    await until(() => t.server.collab.stats().documents === 0, 'the eviction')
    expect(t.server.collab.stats().counters.evictions).toBe(1)
    const again = t.connect('viewer')
    await again.synced()
    expect(formulaText(again.doc).toString()).toBe('2*Eg*2')
    expect(t.server.collab.stats().counters.documentsLoaded).toBe(2)
  })

  it('loads a sheet whose log was never compacted (10,000 rows) and compacts it right after the first answer', async () => {
    const doc = new Y.Doc()
    Y.applyUpdate(doc, Y.encodeStateAsUpdate(await loadDocument(t.lab.handle.db, t.lab.sheetId)))
    const rows: Uint8Array[] = []
    doc.on('update', (u: Uint8Array) => rows.push(u))
    const text = formulaText(doc)
    for (let i = 0; i < 10_000; i++) text.insert(text.length, String(i % 10))
    // written outside the server, as a log that was never compacted (the state row covers none of it)
    const log = rows.map((r, i) => ({ sheetId: t.lab.sheetId, seq: i + 1, update: Buffer.from(r), userId: null, createdAt: 0 }))
    for (let i = 0; i < log.length; i += 1000) await t.lab.handle.db.insert(sheetUpdates).values(log.slice(i, i + 1000))
    expect(await storedRows(t.lab)).toBe(10_000)
    await t.start()
    const a = t.connect('viewer')
    await a.synced()
    expect(formulaText(a.doc).toString()).toBe(text.toString())
    await until(async () => await storedRows(t.lab) === 0, 'the compaction of the long log')
    expect(formulaText(await loadDocument(t.lab.handle.db, t.lab.sheetId)).toString()).toBe(text.toString())
  })

  it('buildDocument() turns a state and a long log into the same document the edits made', () => {
    const source = new Y.Doc()
    const updates: Uint8Array[] = []
    source.on('update', (u: Uint8Array) => updates.push(u))
    sheetFileToDoc(DEMO_SHEET, source)
    const t = formulaText(source)
    for (let i = 0; i < 1234; i++) {
      if (i % 3 === 2) t.delete(0, 1)
      else t.insert(t.length, 'q')
    }
    const state = updates.splice(0, 1)[0]
    const built = buildDocument(state, updates)
    expect(docToSheetFile(built)).toEqual(docToSheetFile(source))
    expect(Y.encodeStateVector(built)).toEqual(Y.encodeStateVector(source))
  })

  it('never relays an update the database refused: its sheet reloads, the clients resync, other sheets go on', async () => {
    await t.start()
    const other = await t.lab.addSheet()
    const a = t.connect('editor')
    const b = t.connect('editor2')
    const c = t.connect('editor', { sheetId: other })
    await Promise.all([a.synced(), b.synced(), c.synced()])
    // The sheet row vanishes under the live document (as if deleted without the hook): inserts now fail on the key.
    await t.lab.handle.db.delete(sheets).where(eq(sheets.id, t.lab.sheetId))
    formulaText(a.doc).insert(0, 'LOST ')
    formulaText(c.doc).insert(0, 'kept ')
    await until(() => t.server.collab.stats().counters.storeFailures === 1, 'the refused store')
    await until(() => a.closes.length >= 1 && b.closes.length >= 1, 'the sheet connections to close')
    expect(a.closes[0]).toEqual({ code: CLOSE.saveFailed, reason: 'the change could not be saved; reconnecting' })
    expect(formulaText(b.doc).toString()).toBe('Eg*2')
    await until(async () => await storedRows(t.lab, other) === 1, 'the other sheet stored')
    expect(c.closes).toEqual([])
  })

  it('changeDocument() stores a server-side change before returning and relays it to everyone connected', async () => {
    await t.start()
    const a = t.connect('viewer')
    await a.synced()
    await t.server.collab.changeDocument(t.lab.sheetId, (doc) => doc.getMap('meta').set('title', 'Edge model, annealed'), t.lab.userIds.owner)
    expect(docToSheetFile(await loadDocument(t.lab.handle.db, t.lab.sheetId)).title).toBe('Edge model, annealed')
    const [row] = await t.lab.handle.db.select({ userId: sheetUpdates.userId }).from(sheetUpdates).where(eq(sheetUpdates.sheetId, t.lab.sheetId))
    expect(row.userId).toBe(t.lab.userIds.owner)
    await until(() => a.doc.getMap('meta').get('title') === 'Edge model, annealed', 'the change at the viewer')
  })

  it('two instances joined by a bus share one sheet: edits and presence cross over, each row is stored once', async () => {
    const bus = createMemoryBus()
    await t.start({ bus, instanceId: 'one', compactEvery: 50 })
    const second = await t.another({ bus, instanceId: 'two', compactEvery: 50 })
    const a = t.connect('editor')
    const b = t.connect('editor2', { server: second })
    await Promise.all([a.synced(), b.synced()])
    a.provider.awareness.setLocalStateField('cell', 'cx')
    await until(() => b.provider.awareness.getStates().has(a.doc.clientID), 'presence across instances')
    const ta = formulaText(a.doc)
    const tb = formulaText(b.doc)
    for (let i = 0; i < 120; i++) {
      ta.insert(ta.length, 'a')
      tb.insert(0, 'b')
      if (i % 10 === 0) await new Promise((r) => setTimeout(r, 1))
    }
    await until(() => ta.length === 244 && tb.length === 244, 'both edits everywhere')
    expect(ta.toString()).toBe(tb.toString())
    const stored = t.server.collab.stats().counters.rowsStored + second.collab.stats().counters.rowsStored
    expect(stored).toBe(240)
    await second.close()
    await t.server.close()
    expect(formulaText(await loadDocument(t.lab.handle.db, t.lab.sheetId)).toString()).toBe(ta.toString())
  })
})
