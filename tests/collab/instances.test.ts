// Two app instances over one database, joined by a bus: both compact a shared log often while both sides write, one
// evicts the sheet and loads it again while the other keeps writing, and every copy — both instances', a late
// joiner's on each, and a reload from the database — ends identical.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { createMemoryBus, type BusEvent, type CollabBus } from '../../server/collab/index'
import { storedRows, until } from './support/fixture'
import { awarenessFrame } from './support/frames'
import { useCollab } from './support/useCollab'

function text(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}
/** A bus in memory that drops the next `lose` update publications (lost on the way, or never sent by a killed process). */
function lossyBus(): CollabBus & { lose: number } {
  const inner = createMemoryBus()
  const bus = {
    lose: 0,
    publish(instanceId: string, event: BusEvent) {
      if (event.type === 'update' && bus.lose > 0) bus.lose--
      else inner.publish(instanceId, event)
    },
    subscribe: inner.subscribe,
  }
  return bus
}

const formula = (doc: Y.Doc) => (cellsOf(doc).length > 2 ? text(doc).toString() : '')

describe('collab: two instances sharing one log', () => {
  const t = useCollab({ start: false })

  it('compact, evict and reload while the other writes, and every copy ends the same as the database', async () => {
    const bus = createMemoryBus()
    const quick = { compactEvery: 7, idleCompactMs: 20, evictAfterMs: 40, sweepMs: 10 }
    const one = await t.start({ bus, instanceId: 'one', ...quick })
    const two = await t.another({ bus, instanceId: 'two', ...quick })
    const a = t.connect('editor', { server: one })
    const b = t.connect('editor2', { server: two })
    await Promise.all([a.synced(), b.synced()])
    for (let i = 0; i < 60; i++) {
      text(a.doc).insert(text(a.doc).length, 'a')
      text(b.doc).insert(0, 'b')
      if (i % 5 === 0) await new Promise((r) => setTimeout(r, 2))
    }
    await until(() => formula(a.doc).length === 124 && formula(b.doc) === formula(a.doc), 'both edits everywhere')
    // a leaves: instance one evicts the sheet while b keeps writing on instance two.
    a.destroy()
    t.forget(a)
    await until(() => one.collab.stats().documents === 0, 'the eviction on instance one')
    for (let i = 0; i < 30; i++) {
      text(b.doc).insert(text(b.doc).length, 'c')
      if (i % 5 === 0) await new Promise((r) => setTimeout(r, 2))
    }
    await until(() => two.collab.stats().counters.rowsStored >= 90, 'b’s rows stored')
    const lateOne = t.connect('viewer', { server: one })
    const lateTwo = t.connect('reviewer', { server: two })
    await Promise.all([lateOne.synced(), lateTwo.synced()])
    await until(() => formula(lateOne.doc) === formula(b.doc) && formula(lateTwo.doc) === formula(b.doc), 'the late joiners to match')
    expect(formula(b.doc)).toBe('b'.repeat(60) + 'Eg*2' + 'a'.repeat(60) + 'c'.repeat(30))
    // Instance one, loaded again, takes new edits and relays them across.
    const again = t.connect('editor', { server: one })
    await again.synced()
    text(again.doc).insert(0, '>')
    await until(() => formula(b.doc).startsWith('>'), 'the edit from the reloaded instance at b')
    await until(() => one.collab.stats().counters.compactions + two.collab.stats().counters.compactions >= 5, 'compactions on the shared log')
    await two.close()
    await one.close()
    const stored = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    expect(formula(stored)).toBe(formula(b.doc))
    expect(docToSheetFile(stored)).toEqual(docToSheetFile(b.doc))
    expect(Y.encodeStateVector(stored)).toEqual(Y.encodeStateVector(b.doc))
  })

  it('catches a document up from the database when a publication from the other instance was lost', async () => {
    const bus = lossyBus()
    const one = await t.start({ bus, instanceId: 'one', gapMs: 50 })
    const two = await t.another({ bus, instanceId: 'two', gapMs: 50 })
    const a = t.connect('editor', { server: one })
    const b = t.connect('editor2', { server: two })
    await Promise.all([a.synced(), b.synced()])
    bus.lose = 1
    text(a.doc).insert(4, ' lost')
    await until(async () => (await storedRows(t.lab)) === 1, 'the first edit stored (its publication lost)')
    text(a.doc).insert(text(a.doc).length, ' heard')
    // Seq 2 arrives without seq 1: after gapMs instance two reads the sheet again and relays what it lacked.
    await until(() => formula(b.doc) === 'Eg*2 lost heard', 'both edits at b')
    expect(two.collab.stats().counters.catchUps).toBe(1)
    expect(two.collab.stats().sheets[0]).toMatchObject({ rowsSinceCompaction: 2 })
  })

  it('an instance that loads the sheet announces the stored head, so a holder catches up on a lost publication nobody follows', async () => {
    const bus = lossyBus()
    // as if instance one were killed between storing a row and publishing it: no later seq reveals the hole
    const one = await t.start({ bus, instanceId: 'one', gapMs: 60_000 })
    const two = await t.another({ bus, instanceId: 'two', gapMs: 60_000 })
    const a = t.connect('editor', { server: one })
    const b = t.connect('editor2', { server: two })
    await Promise.all([a.synced(), b.synced()])
    bus.lose = 1
    text(a.doc).insert(4, ' stored, never heard')
    await until(async () => (await storedRows(t.lab)) === 1, 'the edit stored (its publication lost)')
    await new Promise((r) => setTimeout(r, 50))
    expect(formula(b.doc)).toBe('Eg*2')
    // a third instance opens the sheet (a restarted one, say): it reads the log and announces seq 1
    const three = await t.another({ bus, instanceId: 'three' })
    const c = t.connect('viewer', { server: three })
    await c.synced()
    expect(formula(c.doc)).toBe('Eg*2 stored, never heard')
    await until(() => formula(b.doc) === 'Eg*2 stored, never heard', 'the stored edit at b')
    expect(two.collab.stats().counters.catchUps).toBe(1)
    expect(one.collab.stats().counters.catchUps).toBe(0)
  })

  it('a peer on one instance cannot take over the presence of a person on the other', async () => {
    const bus = createMemoryBus()
    const one = await t.start({ bus, instanceId: 'one' })
    const two = await t.another({ bus, instanceId: 'two' })
    const a = t.connect('editor', { server: one })
    const b = t.connect('editor2', { server: two })
    await Promise.all([a.synced(), b.synced()])
    a.provider.awareness.setLocalStateField('cell', 'cx')
    await until(() => b.provider.awareness.getStates().get(a.doc.clientID)?.cell === 'cx', 'a’s presence at b')
    // Someone on instance two announces a's client id with a later clock.
    const raw = await t.raw('viewer', { server: two })
    raw.ws.send(awarenessFrame([{ clientId: a.doc.clientID, clock: 1_000, state: { cell: 'cEg' } }]))
    await until(() => two.collab.stats().counters.awarenessRefused === 1, 'the claim to be refused')
    expect(b.provider.awareness.getStates().get(a.doc.clientID)?.cell).toBe('cx')
    expect(a.provider.awareness.getStates().get(a.doc.clientID)?.cell).toBe('cx')
  })
})
