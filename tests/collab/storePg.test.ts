// The PostgreSQL hooks under the collaboration server, as several app instances use them on one database: appends
// from two instances at once get distinct, consecutive seqs; of two compactions at once exactly one runs; a load after
// compaction gives the document the edits made.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile, sheetFileToDoc } from '../../shared/doc/sheetDoc'
import { createPgStore } from '../../server/collab/store.pg'
import type { CollabStore } from '../../server/collab/store'
import { DEMO_SHEET } from './support/fixture'
import { PG_SKIP, scratchDatabase, type ScratchDatabase } from './support/pg'

function formula(doc: Y.Doc): Y.Text {
  return cellsOf(doc).get(2).get('source') as Y.Text
}

/** A sheet's seeded state row, as creating a sheet writes it. */
async function seedSheet(db: ScratchDatabase, sheetId: string): Promise<Y.Doc> {
  await db.addSheet(sheetId)
  const doc = sheetFileToDoc(DEMO_SHEET)
  await db.pool.query('INSERT INTO sheet_states (sheet_id, state, upto_seq, updated_at) VALUES ($1, $2, 0, $3)', [sheetId, Buffer.from(Y.encodeStateAsUpdate(doc)), Date.now()])
  return doc
}

/** Updates that each append one letter to the formula of `doc` (which they change). */
function edits(doc: Y.Doc, letters: string): Uint8Array[] {
  return [...letters].map((letter) => {
    const before = Y.encodeStateVector(doc)
    formula(doc).insert(formula(doc).length, letter)
    return Y.encodeStateAsUpdate(doc, before)
  })
}

async function seqsOf(db: ScratchDatabase, sheetId: string): Promise<number[]> {
  const { rows } = await db.pool.query<{ seq: number }>('SELECT seq FROM sheet_updates WHERE sheet_id = $1 ORDER BY seq', [sheetId])
  return rows.map((r) => r.seq)
}

describe.skipIf(PG_SKIP !== null)(`collab: PostgreSQL store${PG_SKIP ? ` (skipped: ${PG_SKIP})` : ''}`, () => {
  let db: ScratchDatabase
  let one: CollabStore
  let two: CollabStore
  beforeEach(async () => {
    db = await scratchDatabase()
    // Two instances: each its own store over its own pool of the one database.
    one = createPgStore(db.pool)
    two = createPgStore(db.openPool())
  })
  afterEach(async () => {
    await db.drop()
  })

  it('storeUpdates() from two instances at once gives every row a distinct seq, consecutive from 1, and keeps each batch in order', async () => {
    const doc = await seedSheet(db, 'sheet-a')
    const updates = edits(doc, 'abcdefghijklmnopqrstuvwxyz0123456789')
    const batches = Array.from({ length: 12 }, (_, i) => updates.slice(i * 3, i * 3 + 3).map((update) => ({ sheetId: 'sheet-a', update, userId: null })))
    const answers = await Promise.all(batches.map((batch, i) => (i % 2 === 0 ? one : two).storeUpdates(batch)))
    for (const seqs of answers) {
      expect(seqs).toHaveLength(3)
      expect(seqs[1]).toBe(seqs[0] + 1)
      expect(seqs[2]).toBe(seqs[1] + 1)
    }
    expect(answers.flat().sort((a, b) => a - b)).toEqual(Array.from({ length: 36 }, (_, i) => i + 1))
    expect(await seqsOf(db, 'sheet-a')).toEqual(Array.from({ length: 36 }, (_, i) => i + 1))
    const loaded = await two.loadDocument('sheet-a')
    expect(formula(loaded.doc).toString()).toBe(formula(doc).toString())
    expect(loaded.uptoSeq).toBe(0)
    expect(loaded.seqs).toHaveLength(36)
  })

  it('storeUpdates() stores rows of several sheets in one transaction, and none of them when one is refused', async () => {
    const a = await seedSheet(db, 'sheet-a')
    const b = await seedSheet(db, 'sheet-b')
    const seqs = await one.storeUpdates([
      { sheetId: 'sheet-b', update: edits(b, 'x')[0], userId: 'u1' },
      { sheetId: 'sheet-a', update: edits(a, 'y')[0], userId: null },
      { sheetId: 'sheet-b', update: edits(b, 'z')[0], userId: 'u1' },
    ])
    expect(seqs).toEqual([1, 1, 2])
    await expect(
      one.storeUpdates([
        { sheetId: 'sheet-a', update: edits(a, 'w')[0], userId: null },
        { sheetId: 'sheet-b', update: new Uint8Array(0), userId: null },
        { sheetId: 'no-such-sheet', update: new Uint8Array(0), userId: null },
      ]),
    ).rejects.toThrow(/foreign key/)
    expect(await seqsOf(db, 'sheet-a')).toEqual([1])
    expect(await seqsOf(db, 'sheet-b')).toEqual([1, 2])
  })

  it('compact() from two instances at once: exactly one compacts, and a load afterwards equals the document', async () => {
    const doc = await seedSheet(db, 'sheet-a')
    const seqs = await one.storeUpdates(edits(doc, 'compact').map((update) => ({ sheetId: 'sheet-a', update, userId: null })))
    const state = Y.encodeStateAsUpdate(doc)
    const outcomes = await Promise.all([one.compact('sheet-a', state, 0, seqs), two.compact('sheet-a', state, 0, seqs)])
    expect(outcomes.filter((o) => o.ok)).toEqual([{ ok: true, uptoSeq: 7, deleted: 7 }])
    const refused = outcomes.find((o) => !o.ok)!
    expect(refused.ok).toBe(false)
    expect(await seqsOf(db, 'sheet-a')).toEqual([])
    // Later rows continue above the state's cover even with the log empty.
    const [next] = await two.storeUpdates([{ sheetId: 'sheet-a', update: edits(doc, '!')[0], userId: null }])
    expect(next).toBe(8)
    const loaded = await one.loadDocument('sheet-a')
    expect(loaded.uptoSeq).toBe(7)
    expect(loaded.seqs).toEqual([8])
    expect(docToSheetFile(loaded.doc)).toEqual(docToSheetFile(doc))
    expect(formula(loaded.doc).toString()).toBe('Eg*2compact!')
  })

  it('compact() refuses when the database holds a row this instance has not seen, and keeps every row', async () => {
    const doc = await seedSheet(db, 'sheet-a')
    const mine = await one.storeUpdates(edits(doc, 'ab').map((update) => ({ sheetId: 'sheet-a', update, userId: null })))
    const theirs = await two.storeUpdates(edits(doc, 'cd').map((update) => ({ sheetId: 'sheet-a', update, userId: null })))
    expect(theirs).toEqual([3, 4])
    // Instance one has heard of row 4 but not yet of row 3: four rows up to seq 4, three known.
    const outcome = await one.compact('sheet-a', Y.encodeStateAsUpdate(doc), 0, [...mine, 4])
    expect(outcome).toEqual({ ok: false, reason: '4 rows up to seq 4, 3 known here', uptoSeq: 0 })
    const stale = await one.compact('sheet-a', Y.encodeStateAsUpdate(doc), 5, mine)
    expect(stale).toEqual({ ok: false, reason: 'the state row moved to seq 0 (expected 5)', uptoSeq: 0 })
    expect(await seqsOf(db, 'sheet-a')).toEqual([1, 2, 3, 4])
  })
})
