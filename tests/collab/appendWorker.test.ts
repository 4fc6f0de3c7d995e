// SQLite's append worker (server/collab/appendWorker.ts): a writer's update is committed in a worker thread while the
// event loop applies it, and still before anything is relayed. On a database file: every relayed edit is already
// stored when a peer receives it and a reload gives the same text; rows come back with their bytes, authors and seqs
// in order, also when two were handed over before either was waited for; rows handed over while the worker is busy
// are committed together; rows it has not reached are taken back by the event loop and committed after its own; more
// rows in flight than it has slots, and rows that fill its area, all keep their bytes; a failed insert reports
// SQLite's own message, alone or among others committed together, and the next row goes through; an update Yjs
// refuses leaves no row behind; a stopped worker hands the appends back to the event loop.
import { afterAll, afterEach, describe, expect, it } from 'vitest'
import { mkdtempSync, rmSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { randomUUID } from 'node:crypto'
import * as Y from 'yjs'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { createMemoryBus } from '../../server/collab/index'
import { DocumentRegistry, type RegistryPeer } from '../../server/collab/registry'
import { createSqliteStore, INSERT_SQL, type PendingRow, type SyncCollabStore } from '../../server/collab/store'
import { startAppendWorker, type AppendWorker } from '../../server/collab/appendWorker'
import { createLab, sqliteOf, until, type Lab } from './support/fixture'
import { useCollab } from './support/useCollab'
import { ON_POSTGRES, sqliteOnly } from '../utils/db'

const dir = mkdtempSync(path.join(os.tmpdir(), 'penumbra-append-worker-'))
let files = 0
const nextFile = () => path.join(dir, `lab-${++files}.db`)
afterAll(() => rmSync(dir, { recursive: true, force: true }))

function rowCount(lab: Lab): number {
  return (sqliteOf(lab).prepare('SELECT count(*) AS n FROM sheet_updates WHERE sheet_id = ?').get(lab.sheetId) as { n: number }).n
}

/** The first row handed over also tells that the worker is ready (until then `beginAppend` declines). */
async function firstBegin(store: SyncCollabStore, row: PendingRow): Promise<() => number> {
  let finish: (() => number) | undefined
  await until(() => (finish = store.beginAppend?.(row)) !== undefined, 'the append worker to start')
  return finish!
}

describe.skipIf(ON_POSTGRES)(sqliteOnly('collab: appends beside the apply, on a database file'), () => {
  const t = useCollab({ file: nextFile, rateLimit: { messagesPerSecond: 1e6, messageBurst: 1e6 } })

  it('stores every edit before a peer receives it, through the worker, and a reload gives the same text', async () => {
    const writer = t.connect('editor')
    await writer.synced()
    const observer = await t.raw('viewer')
    const before = rowCount(t.lab)
    // At the moment each relayed edit arrives, how many rows the database holds.
    const rowsAtArrival: number[] = []
    observer.ws.on('message', (data: Buffer) => {
      if (data[0] === 0 && data[1] === 2) rowsAtArrival.push(rowCount(t.lab))
    })
    const text = cellsOf(writer.doc).get(2).get('source') as Y.Text
    const beside = () => t.server.collab.stats().counters.rowsAppendedBeside
    // the worker starts with the server: edits made before it is ready are appended on the event loop
    await until(async () => {
      text.insert(text.length, 'w')
      await new Promise((r) => setTimeout(r, 10))
      return beside() > 0
    }, 'the append worker to take an edit')
    await until(() => rowsAtArrival.length === rowCount(t.lab) - before, 'the warm-up edits at the observer')
    const warmUp = rowsAtArrival.length
    const besideBefore = beside()
    const typed = 120
    for (let i = 0; i < typed; i++) {
      text.insert(text.length, String(i % 10))
      await new Promise((r) => setTimeout(r, 1))
    }
    await until(() => rowsAtArrival.length >= warmUp + typed, 'every edit at the observer')
    rowsAtArrival.forEach((rows, i) => expect(rows, `rows stored when edit ${i + 1} arrived`).toBeGreaterThanOrEqual(before + i + 1))
    expect(beside() - besideBefore).toBe(typed)
    const reloaded = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    expect((cellsOf(reloaded).get(2).get('source') as Y.Text).toString()).toBe(text.toString())
  })
})

/** The store's own append on the event loop, for rows taken back from the worker. */
function appendHere(sqlite: ReturnType<typeof sqliteOf>): (row: PendingRow) => number {
  const insert = sqlite.prepare(INSERT_SQL)
  return (row) => (insert.all({ sheetId: row.sheetId, update: Buffer.from(row.update), userId: row.userId, createdAt: Date.now() })[0] as { seq: number }).seq
}

describe.skipIf(ON_POSTGRES)(sqliteOnly('collab: the append worker itself'), () => {
  let lab: Lab | null = null
  let store: SyncCollabStore | null = null
  afterEach(async () => {
    await store?.close?.()
    await lab?.handle.close()
    store = null
    lab = null
  })

  async function open(): Promise<{ lab: Lab; store: SyncCollabStore }> {
    lab = await createLab(nextFile())
    store = createSqliteStore(lab.handle.db as Parameters<typeof createSqliteStore>[0], { appendWorker: true })
    return { lab, store }
  }

  /** A worker of the test's own on a fresh lab, started (its first row answered), stopped afterwards. */
  async function withWorker(test: (worker: AppendWorker, lab: Lab, sqlite: ReturnType<typeof sqliteOf>) => Promise<void>): Promise<void> {
    const { lab } = await open()
    const sqlite = sqliteOf(lab)
    const worker = startAppendWorker(sqlite, INSERT_SQL, appendHere(sqlite))
    try {
      await until(() => worker.begin({ sheetId: lab.sheetId, update: Uint8Array.of(0), userId: null })?.() !== undefined, 'the worker to start')
      await test(worker, lab, sqlite)
    } finally {
      await worker.stop()
    }
  }

  const stored = (l: Lab, seq: number) =>
    sqliteOf(l).prepare('SELECT "update", user_id AS userId FROM sheet_updates WHERE sheet_id = ? AND seq = ?').get(l.sheetId, seq) as
      | { update: Buffer; userId: string | null }
      | undefined

  it('commits rows with their bytes and authors, seqs in order, also when two are handed over before either is waited for', async () => {
    const { lab, store } = await open()
    const row = (bytes: number[], userId: string | null): PendingRow => ({ sheetId: lab.sheetId, update: Uint8Array.from(bytes), userId })
    const first = (await firstBegin(store, row([1, 2, 3], lab.userIds.editor)))()
    const second = store.beginAppend!(row([4, 5], null))!()
    const a = store.beginAppend!(row([6], lab.userIds.owner))!
    const b = store.beginAppend!(row([7, 7, 7, 7], lab.userIds.editor))!
    const seqB = b()
    const seqA = a()
    expect([first, second, seqA, seqB]).toEqual([first, first + 1, first + 2, first + 3])
    expect(stored(lab, first)).toEqual({ update: Buffer.from([1, 2, 3]), userId: lab.userIds.editor })
    expect(stored(lab, second)).toEqual({ update: Buffer.from([4, 5]), userId: null })
    expect(stored(lab, seqA)).toEqual({ update: Buffer.from([6]), userId: lab.userIds.owner })
    expect(stored(lab, seqB)).toEqual({ update: Buffer.from([7, 7, 7, 7]), userId: lab.userIds.editor })
  })

  it('commits the rows handed over while it was busy in one transaction, each with its own seq and bytes', async () => {
    await withWorker(async (worker, lab, sqlite) => {
      const before = worker.commits()
      const taken = worker.takenBack()
      const rows = rowCount(lab)
      // The event loop holds the write lock, so the worker waits at its first row while 59 more are handed over.
      sqlite.exec('BEGIN IMMEDIATE')
      const finishes = Array.from({ length: 60 }, (_, i) => worker.begin({ sheetId: lab.sheetId, update: Uint8Array.of(i, i), userId: i % 2 ? lab.userIds.editor : null })!)
      await new Promise((r) => setTimeout(r, 50))
      sqlite.exec('COMMIT')
      // left to the worker (no answer asked for, so nothing is taken back)
      await until(() => rowCount(lab) === rows + 60, 'the worker to store all 60')
      expect(worker.takenBack()).toBe(taken)
      const seqs = finishes.map((f) => f())
      expect(seqs).toEqual(seqs.map((_, i) => seqs[0] + i))
      seqs.forEach((seq, i) => expect(stored(lab, seq)).toEqual({ update: Buffer.from([i, i]), userId: i % 2 ? lab.userIds.editor : null }))
      // the first row alone (or with a few), then the rest together
      expect(worker.commits() - before).toBeLessThanOrEqual(2)
    })
  })

  it('commits on the event loop the rows a busy worker has not reached, after the one it holds, seqs in order', async () => {
    await withWorker(async (worker, lab, sqlite) => {
      const before = worker.takenBack()
      // The worker claims the first row and waits for the write lock the event loop holds; nine more follow.
      sqlite.exec('BEGIN IMMEDIATE')
      const held = worker.begin({ sheetId: lab.sheetId, update: Uint8Array.of(1), userId: null })!
      await new Promise((r) => setTimeout(r, 30))
      const later = Array.from({ length: 9 }, (_, i) => worker.begin({ sheetId: lab.sheetId, update: Uint8Array.of(2 + i), userId: lab.userIds.editor })!)
      sqlite.exec('COMMIT')
      // Asking for the last answer takes the nine back at once: they are committed here, after the worker's row.
      const last = later[8]()
      expect(worker.takenBack() - before).toBe(9)
      const seqs = [held(), ...later.map((f) => f())]
      expect(seqs[9]).toBe(last)
      expect(seqs).toEqual(seqs.map((_, i) => seqs[0] + i))
      seqs.forEach((seq, i) => expect(stored(lab, seq)).toEqual({ update: Buffer.from([1 + i]), userId: i === 0 ? null : lab.userIds.editor }))
    })
  })

  it('keeps every row when more are in flight than it has slots, and when rows fill its area', async () => {
    const { lab, store } = await open()
    const first = (await firstBegin(store, { sheetId: lab.sheetId, update: Uint8Array.of(1), userId: null }))()
    // 200 small rows, none waited for until the end: more than the 64 answers it holds at once
    const small = Array.from({ length: 200 }, (_, i) => store.beginAppend!({ sheetId: lab.sheetId, update: Uint8Array.of(i % 256, 9), userId: lab.userIds.owner })!)
    // five rows of 900 kB: the 2 MiB area is full after two, and starts again once they are answered
    const big = (k: number) => new Uint8Array(900_000).fill(k)
    const large = [1, 2, 3, 4, 5].map((k) => store.beginAppend!({ sheetId: lab.sheetId, update: big(k), userId: null })!)
    const seqs = [...small, ...large].map((f) => f())
    expect(seqs).toEqual(seqs.map((_, i) => first + 1 + i))
    small.forEach((_, i) => expect(stored(lab, seqs[i])?.update).toEqual(Buffer.from([i % 256, 9])))
    large.forEach((_, k) => expect(stored(lab, seqs[200 + k])?.update.equals(Buffer.from(big(k + 1)))).toBe(true))
  })

  it('answers a failed insert among others committed together with its own error, and stores the rest', async () => {
    await withWorker(async (worker, lab, sqlite) => {
      sqlite.exec('BEGIN IMMEDIATE')
      const good1 = worker.begin({ sheetId: lab.sheetId, update: Uint8Array.of(1), userId: null })!
      const bad = worker.begin({ sheetId: randomUUID(), update: Uint8Array.of(2), userId: null })!
      const good2 = worker.begin({ sheetId: lab.sheetId, update: Uint8Array.of(3), userId: null })!
      sqlite.exec('COMMIT')
      const seq1 = good1()
      expect(() => bad()).toThrow(/FOREIGN KEY constraint failed/)
      const seq2 = good2()
      expect(stored(lab, seq1)?.update).toEqual(Buffer.from([1]))
      expect(stored(lab, seq2)?.update).toEqual(Buffer.from([3]))
    })
  })

  it('reports a failed insert with SQLite’s message, and the next row still goes through', async () => {
    const { lab, store } = await open()
    await firstBegin(store, { sheetId: lab.sheetId, update: Uint8Array.of(1), userId: null })
    const refused = store.beginAppend!({ sheetId: randomUUID(), update: Uint8Array.of(2), userId: null })!
    expect(() => refused()).toThrow(/FOREIGN KEY constraint failed/)
    const seq = store.beginAppend!({ sheetId: lab.sheetId, update: Uint8Array.of(3), userId: null })!()
    expect(stored(lab, seq)?.update).toEqual(Buffer.from([3]))
  })

  it('leaves no row for an update Yjs refuses, and stores the next one', async () => {
    const { lab, store } = await open()
    // its answer awaited, so the row is committed before the count below is taken
    ;(await firstBegin(store, { sheetId: lab.sheetId, update: new Uint8Array(Y.encodeStateAsUpdate(new Y.Doc())), userId: null }))()
    const registry = new DocumentRegistry({ store, bus: createMemoryBus(), instanceId: 'test', compactEvery: 500, idleCompactMs: 1e9, evictAfterMs: 1e9 })
    try {
      const entry = registry.open(lab.sheetId)
      if (entry instanceof Promise) throw new Error('the SQLite store answers at once')
      const peer: RegistryPeer = { userId: lab.userIds.editor, send: () => {}, close: () => {} }
      registry.join(entry, peer, true)
      registry.flush()
      const rows = rowCount(lab)
      expect(() => registry.applyUpdate(entry, peer, Uint8Array.of(7, 200, 200, 200, 200), true)).toThrow()
      registry.flush()
      expect(rowCount(lab)).toBe(rows)
      // a real edit after it goes through the worker and is stored
      const edit = new Y.Doc()
      Y.applyUpdate(edit, Y.encodeStateAsUpdate(entry.doc))
      ;(cellsOf(edit).get(2).get('source') as Y.Text).insert(0, '2*')
      registry.applyUpdate(entry, peer, Y.encodeStateAsUpdate(edit, Y.encodeStateVector(entry.doc)), true)
      registry.flush()
      expect(rowCount(lab)).toBe(rows + 1)
      expect(registry.counters.rowsAppendedBeside).toBe(1)
    } finally {
      await registry.close()
    }
  })

  it('hands the appends back to the event loop once the worker is stopped', async () => {
    const { lab, store } = await open()
    await firstBegin(store, { sheetId: lab.sheetId, update: Uint8Array.of(1), userId: null })
    await store.close!()
    expect(store.beginAppend!({ sheetId: lab.sheetId, update: Uint8Array.of(2), userId: null })).toBeUndefined()
    const [seq] = store.storeUpdates([{ sheetId: lab.sheetId, update: Uint8Array.of(3), userId: null }])
    expect(stored(lab, seq)?.update).toEqual(Buffer.from([3]))
  })
})
