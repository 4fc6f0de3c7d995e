// The registry over a store that answers later (a network database): an update is relayed only once it is stored,
// one piece of store work runs at a time (so order per sheet holds and a compaction never overlaps a commit), a
// refused store relays nothing, a loading sheet makes its connections and the bus events heard meanwhile wait.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { CLOSE, createMemoryBus } from '../../server/collab/index'
import type { CollabStore, LoadedDocument, PendingRow } from '../../server/collab/store'
import { defaultStore } from '../../server/collab/defaultStore'
import { storedRows, until, upgradeStatus, type Lab } from './support/fixture'
import { useCollab } from './support/useCollab'

function formula(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}

/** A gate: work waits on `wait()` while it is shut; `open()` lets everything through. */
function gate() {
  let release: () => void = () => {}
  let promise: Promise<void> | null = null
  return {
    shut() {
      promise ??= new Promise<void>((resolve) => (release = resolve))
    },
    open() {
      release()
      promise = null
    },
    wait: () => promise ?? Promise.resolve(),
  }
}

/**
 * The database's own store behind Promises: each call does its work after `delay()` milliseconds (the read of a load happens
 * at once, its answer later, as a network round trip would), and after the gates open. Counts calls and records how
 * many calls were in flight together.
 */
function slowStore(lab: Lab, delay: () => number = () => 2) {
  const inner = defaultStore(lab.handle.db)
  const gates = { load: gate(), store: gate() }
  const failNext = { store: 0, load: 0 }
  const calls = { load: 0, store: 0, compact: 0 }
  let inFlight = 0
  let maxInFlight = 0
  const later = <T>(g: ReturnType<typeof gate>, work: () => T | Promise<T>): Promise<T> => {
    inFlight++
    maxInFlight = Math.max(maxInFlight, inFlight)
    return new Promise<void>((resolve) => setTimeout(resolve, delay()))
      .then(() => g.wait())
      .then(work)
      .finally(() => inFlight--)
  }
  const store: CollabStore = {
    loadDocument(sheetId): Promise<LoadedDocument> {
      calls.load++
      if (failNext.load > 0) {
        failNext.load--
        return Promise.reject(new Error('the database did not answer'))
      }
      const loaded = inner.loadDocument(sheetId)
      return new Promise<void>((resolve) => setTimeout(resolve, delay())).then(() => gates.load.wait()).then(() => loaded)
    },
    storeUpdates(rows: readonly PendingRow[]) {
      calls.store++
      return later(gates.store, () => {
        if (failNext.store > 0) {
          failNext.store--
          throw new Error('the database refused the rows')
        }
        return inner.storeUpdates(rows)
      })
    },
    compact(sheetId, state, prevUptoSeq, coveredSeqs) {
      calls.compact++
      return later(gate(), () => inner.compact(sheetId, state, prevUptoSeq, coveredSeqs))
    },
  }
  return { store, gates, failNext, calls, maxInFlight: () => maxInFlight }
}

describe('collab: a store that answers later', () => {
  const t = useCollab({ start: false })

  it('relays and stores nothing of an edit until its store has answered, then both', async () => {
    const slow = slowStore(t.lab)
    await t.start({ hooks: { store: slow.store } })
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    slow.gates.store.shut()
    formula(a.doc).insert(0, 'held ')
    await until(() => slow.calls.store >= 1, 'the store to be asked')
    // Other traffic goes on meanwhile and waits behind the held commit too.
    formula(a.doc).insert(0, 'more ')
    await new Promise((r) => setTimeout(r, 60))
    expect(formula(b.doc).toString()).toBe('Eg*2')
    expect(await storedRows(t.lab)).toBe(0)
    slow.gates.store.open()
    await until(() => formula(b.doc).toString() === 'more held Eg*2', 'the edits at b')
    expect(await storedRows(t.lab)).toBe(2)
    expect(slow.maxInFlight()).toBe(1)
  })

  it('keeps order with one piece of store work at a time while two people type and the log compacts', async () => {
    const slow = slowStore(t.lab, () => Math.floor(Math.random() * 6))
    await t.start({ hooks: { store: slow.store }, compactEvery: 15, idleCompactMs: 30, sweepMs: 10 })
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    for (let i = 0; i < 80; i++) {
      formula(a.doc).insert(formula(a.doc).length, 'a')
      formula(b.doc).insert(0, 'b')
      if (i % 4 === 0) await new Promise((r) => setTimeout(r, 3))
    }
    await until(() => formula(a.doc).length === 164 && formula(b.doc).toString() === formula(a.doc).toString(), 'both edits at both', 15_000)
    await until(() => t.server.collab.stats().counters.compactions >= 3, 'compactions while typing', 15_000)
    // Never a commit beside a commit or a compaction: the store saw one call at a time.
    expect(slow.maxInFlight()).toBe(1)
    await t.server.close()
    const stored = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    expect(docToSheetFile(stored)).toEqual(docToSheetFile(a.doc))
  })

  it('compacts while people type faster than the store answers: from the state taken as each commit began', async () => {
    const slow = slowStore(t.lab, () => 4)
    await t.start({ hooks: { store: slow.store }, compactEvery: 10, idleCompactMs: 60_000, sweepMs: 10 })
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    let whileTyping = 0
    for (let i = 0; i < 150; i++) {
      formula(a.doc).insert(formula(a.doc).length, 'a')
      formula(b.doc).insert(0, 'b')
      await new Promise((r) => setTimeout(r, 1))
      whileTyping = t.server.collab.stats().counters.compactions
    }
    // Every commit ended with more rows already waiting; compaction did not wait for a pause that never came.
    expect(whileTyping).toBeGreaterThanOrEqual(3)
    await until(() => formula(b.doc).toString() === formula(a.doc).toString() && formula(a.doc).length === 304, 'both edits at both')
    expect(slow.maxInFlight()).toBe(1)
    await t.server.close()
    expect(docToSheetFile(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toEqual(docToSheetFile(a.doc))
  })

  it('relays nothing of a refused store: the sheet’s connections close to resync and the edit is nowhere', async () => {
    const slow = slowStore(t.lab)
    await t.start({ hooks: { store: slow.store } })
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    slow.failNext.store = 2 // the group commit, then the sheet's own retry
    formula(a.doc).insert(0, 'LOST ')
    await until(() => t.server.collab.stats().counters.storeFailures === 1, 'the refused store')
    await until(() => a.closes.length >= 1 && b.closes.length >= 1, 'the sheet connections to close')
    expect(a.closes[0]).toEqual({ code: CLOSE.saveFailed, reason: 'the change could not be saved; reconnecting' })
    expect(formula(b.doc).toString()).toBe('Eg*2')
    expect(await storedRows(t.lab)).toBe(0)
  })

  it('loads a sheet once for connections that arrive while it loads, and refuses with 500 when the load fails', async () => {
    const slow = slowStore(t.lab)
    await t.start({ hooks: { store: slow.store } })
    slow.gates.load.shut()
    const a = t.connect('editor')
    const b = t.connect('viewer')
    await until(() => slow.calls.load === 1, 'the load to start')
    await new Promise((r) => setTimeout(r, 40))
    expect(t.server.collab.stats().connections).toBe(0)
    slow.gates.load.open()
    await Promise.all([a.synced(), b.synced()])
    expect(slow.calls.load).toBe(1)
    expect(formula(b.doc).toString()).toBe('Eg*2')
    const other = await t.lab.addSheet()
    slow.failNext.load = 1
    const refused = await upgradeStatus(t.server, other, t.lab.tokens.editor)
    expect(refused.status).toBe(500)
    expect(JSON.parse(refused.body)).toEqual({ error: 'could not load this sheet' })
  })

  it('refuses with 404 the upgrades waiting for a sheet that is deleted while it loads', async () => {
    const slow = slowStore(t.lab)
    await t.start({ hooks: { store: slow.store } })
    slow.gates.load.shut()
    const waiting = upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.editor)
    await until(() => slow.calls.load === 1, 'the load to start')
    t.server.collab.sheetDeleted(t.lab.sheetId)
    slow.gates.load.open()
    const refused = await waiting
    expect(refused.status).toBe(404)
    expect(JSON.parse(refused.body)).toEqual({ error: 'no such sheet' })
    expect(t.server.collab.stats().documents).toBe(0)
  })

  it('changeDocument() settles once the change is stored', async () => {
    const slow = slowStore(t.lab, () => 20)
    await t.start({ hooks: { store: slow.store } })
    await t.server.collab.changeDocument(t.lab.sheetId, (doc) => doc.getMap('meta').set('title', 'Edge model, annealed'), t.lab.userIds.owner)
    expect(docToSheetFile(await loadDocument(t.lab.handle.db, t.lab.sheetId)).title).toBe('Edge model, annealed')
  })

  it('applies the bus events heard while a sheet loads once it is in memory', async () => {
    const bus = createMemoryBus()
    await t.start({ bus, instanceId: 'one' })
    const slow = slowStore(t.lab)
    const two = await t.another({ bus, instanceId: 'two', hooks: { store: slow.store } })
    const a = t.connect('editor')
    await a.synced()
    // Instance two reads the database now, but its answer is held: a's edit is stored and published meanwhile.
    slow.gates.load.shut()
    const b = t.connect('editor2', { server: two })
    await until(() => slow.calls.load === 1, 'the load on instance two')
    formula(a.doc).insert(0, 'while loading ')
    await until(async () => (await storedRows(t.lab)) === 1, 'a’s edit stored')
    await new Promise((r) => setTimeout(r, 20))
    slow.gates.load.open()
    await b.synced()
    await until(() => formula(b.doc).toString() === 'while loading Eg*2', 'the edit heard while loading at b')
  })
})
