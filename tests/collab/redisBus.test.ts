// Two collaboration servers in one process, each with its own Redis bus on one Redis and one shared database, as two
// app instances behind a proxy: edits and presence cross over and converge, a reader's refused update never leaves
// its instance, a removal from the lab and a deleted sheet reach sockets on the other instance; without Redis an
// instance keeps serving its own connections and counts the failures.
import { afterEach, describe, expect, it } from 'vitest'
import { randomUUID } from 'node:crypto'
import { Redis } from 'ioredis'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { CLOSE } from '../../server/collab/index'
import { roundTrip, storedRows, until } from './support/fixture'
import { appendToFormula, readServerFrame, syncFrame } from './support/frames'
import { useCollab } from './support/useCollab'

const REDIS_URL = process.env.REDIS_URL ?? ''
const SKIP = REDIS_URL ? null : 'REDIS_URL is not set: no Redis server to carry events between instances'

function formula(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}

/** Deletes every key under `prefix`. */
async function dropKeys(prefix: string): Promise<void> {
  const redis = new Redis(REDIS_URL)
  try {
    let cursor = '0'
    do {
      const [next, keys] = await redis.scan(cursor, 'MATCH', `${prefix}*`, 'COUNT', 500)
      cursor = next
      if (keys.length > 0) await redis.del(...keys)
    } while (cursor !== '0')
  } finally {
    redis.disconnect()
  }
}

describe.skipIf(SKIP !== null)(`collab: instances joined by Redis streams${SKIP ? ` (skipped: ${SKIP})` : ''}`, () => {
  const prefixes: string[] = []
  // Registered before the fixture's hook, so it runs after the servers have closed (hooks run in reverse order).
  afterEach(async () => {
    for (const prefix of prefixes.splice(0)) await dropKeys(prefix)
  })
  const t = useCollab({ start: false })

  /** Two instances on one database and one Redis, with a key prefix of this test's own. */
  async function twoInstances(extra: Parameters<typeof t.start>[0] = {}) {
    const redisPrefix = `penumbra-test:${randomUUID()}:`
    prefixes.push(redisPrefix)
    const one = await t.start({ redisUrl: REDIS_URL, redisPrefix, instanceId: 'one', ...extra })
    const two = await t.another({ redisUrl: REDIS_URL, redisPrefix, instanceId: 'two', ...extra })
    return { one, two, redisPrefix }
  }

  it('editors on two instances converge, presence crosses over, and each row is stored once', async () => {
    const { one, two } = await twoInstances({ compactEvery: 40 })
    const a = t.connect('editor', { server: one })
    const b = t.connect('editor2', { server: two })
    await Promise.all([a.synced(), b.synced()])
    a.provider.awareness.setLocalStateField('cell', 'cx')
    await until(() => b.provider.awareness.getStates().get(a.doc.clientID)?.cell === 'cx', 'a’s presence at b')
    for (let i = 0; i < 60; i++) {
      formula(a.doc).insert(formula(a.doc).length, 'a')
      formula(b.doc).insert(0, 'b')
      if (i % 6 === 0) await new Promise((r) => setTimeout(r, 3))
    }
    await until(() => formula(a.doc).length === 124 && formula(b.doc).toString() === formula(a.doc).toString(), 'both edits at both')
    const stored = one.collab.stats().counters.rowsStored + two.collab.stats().counters.rowsStored
    // Every client update became one row on the instance that accepted it, never a second one on the other.
    expect(stored).toBeGreaterThanOrEqual(120)
    expect(stored).toBeLessThanOrEqual(122)
    // A latecomer on either instance gets the same document, and so does the database.
    const late = t.connect('viewer', { server: two })
    await late.synced()
    expect(formula(late.doc).toString()).toBe(formula(a.doc).toString())
    await two.close()
    await one.close()
    expect(docToSheetFile(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toEqual(docToSheetFile(a.doc))
  })

  it('a reader’s refused update on one instance never reaches the other', async () => {
    const { one, two } = await twoInstances()
    const watcher = t.connect('editor2', { server: two })
    await watcher.synced()
    const viewer = await t.raw('viewer', { server: one })
    const base = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    viewer.ws.send(syncFrame(2, appendToFormula(base, ' sneaky')))
    await roundTrip(viewer)
    expect(viewer.frames.map(readServerFrame).filter((f) => f.type === 'denied')).toHaveLength(1)
    // An editor's change on instance one, sent after the reader's, arrives at the watcher alone.
    const editor = t.connect('editor', { server: one })
    await editor.synced()
    formula(editor.doc).insert(0, '2*')
    await until(() => formula(watcher.doc).toString() === '2*Eg*2', 'the editor’s change across instances')
    expect(await storedRows(t.lab)).toBe(1)
    expect(one.collab.stats().counters.deniedUpdates).toBe(1)
  })

  it('a removal from the lab on one instance disconnects the person’s socket on the other', async () => {
    const { one, two } = await twoInstances()
    const b = t.connect('editor2', { server: two })
    const stays = t.connect('editor', { server: two })
    await Promise.all([b.synced(), stays.synced()])
    await t.lab.setRole('editor2', null)
    one.collab.membershipChanged(t.lab.labId, t.lab.userIds.editor2)
    await until(() => b.closes.length > 0, 'the removed member’s socket on instance two to close')
    expect(b.closes[0]).toEqual({ code: CLOSE.removed, reason: 'you are no longer a member of this lab' })
    expect(stays.closes).toEqual([])
    expect(two.collab.stats().connections).toBe(1)
  })

  it('a sheet deleted on one instance closes its sockets on the other and unloads it there', async () => {
    const { one, two } = await twoInstances()
    const other = await t.lab.addSheet()
    const b = t.connect('editor2', { server: two })
    const elsewhere = t.connect('editor2', { server: two, sheetId: other })
    await Promise.all([b.synced(), elsewhere.synced()])
    one.collab.sheetDeleted(t.lab.sheetId)
    await until(() => b.closes.length > 0, 'the sheet’s socket on instance two to close')
    expect(b.closes[0]).toEqual({ code: CLOSE.sheetDeleted, reason: 'this sheet was deleted' })
    expect(two.collab.stats().sheets.map((s) => s.sheetId)).toEqual([other])
    expect(elsewhere.closes).toEqual([])
  })

  it('an instance whose Redis cannot be reached keeps serving its own connections and counts the failures', async () => {
    // Nothing listens on port 1: every publication and read fails.
    const alone = await t.start({ redisUrl: 'redis://127.0.0.1:1', instanceId: 'alone' })
    const a = t.connect('editor', { server: alone })
    const b = t.connect('editor2', { server: alone })
    await Promise.all([a.synced(), b.synced()])
    formula(a.doc).insert(0, 'still ')
    await until(() => formula(b.doc).toString() === 'still Eg*2', 'the edit at b on the same instance')
    expect(await storedRows(t.lab)).toBe(1)
    await until(() => alone.collab.stats().counters.busFailures > 0, 'the failures to be counted')
  })
})
