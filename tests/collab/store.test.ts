// The SQLite hooks under the collaboration server: appending rows (one on its own, several in one transaction),
// sequence numbers that never go back even when compaction has emptied the log, and compaction that refuses to run
// when the database holds something this process has not seen.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { createSqliteStore, type SyncCollabStore } from '../../server/collab/store'
import { createLab, sqliteOf, type Lab } from './support/fixture'
import { ON_POSTGRES, sqliteOnly } from '../utils/db'

/** Every stored row of a sheet, oldest first. */
function storedRows(lab: Lab, sheetId: string): { seq: number; update: Uint8Array }[] {
  return sqliteOf(lab).prepare('SELECT seq, "update" FROM sheet_updates WHERE sheet_id = ? ORDER BY seq').all(sheetId) as { seq: number; update: Uint8Array }[]
}

/** An update that appends `text` to the first formula of the sheet's stored document. */
function edit(store: SyncCollabStore, sheetId: string, text: string): Uint8Array {
  const { doc } = store.loadDocument(sheetId)
  const formula = cellsOf(doc)
    .toArray()
    .find((cell) => cell.get('kind') === 'formula')!
  const before = Y.encodeStateVector(doc)
  ;(formula.get('source') as Y.Text).insert(0, text)
  return Y.encodeStateAsUpdate(doc, before)
}

function firstFormulaSource(doc: Y.Doc): string {
  const formula = cellsOf(doc)
    .toArray()
    .find((cell) => cell.get('kind') === 'formula')!
  return (formula.get('source') as Y.Text).toString()
}

describe.skipIf(ON_POSTGRES)(sqliteOnly('collab: SQLite store'), () => {
  let lab: Lab
  let store: SyncCollabStore
  beforeEach(async () => {
    lab = await createLab()
    store = createSqliteStore(lab.handle.db)
  })
  afterEach(() => lab.handle.close())

  it('storeUpdates() appends one row on its own and several in order, returning increasing seqs', () => {
    const [one] = store.storeUpdates([{ sheetId: lab.sheetId, update: edit(store, lab.sheetId, 'a'), userId: lab.userIds.editor }])
    const update = edit(store, lab.sheetId, 'b')
    const many = store.storeUpdates([
      { sheetId: lab.sheetId, update, userId: lab.userIds.editor },
      { sheetId: lab.sheetId, update, userId: null },
      { sheetId: lab.sheetId, update, userId: lab.userIds.editor2 },
    ])
    expect(many).toHaveLength(3)
    expect(many[0]).toBeGreaterThan(one)
    expect(many[1]).toBe(many[0] + 1)
    expect(many[2]).toBe(many[1] + 1)
    const rows = storedRows(lab, lab.sheetId)
    expect(rows.map((r) => r.seq)).toEqual([one, ...many])
    expect(Buffer.from(rows[1].update).equals(Buffer.from(update))).toBe(true)
  })

  it('storeUpdates() stores nothing of a batch when one of its rows is refused', () => {
    const update = edit(store, lab.sheetId, 'c')
    const before = storedRows(lab, lab.sheetId).length
    expect(() =>
      store.storeUpdates([
        { sheetId: lab.sheetId, update, userId: null },
        { sheetId: 'no-such-sheet', update, userId: null },
      ]),
    ).toThrow(/FOREIGN KEY/)
    expect(storedRows(lab, lab.sheetId)).toHaveLength(before)
  })

  it('storeUpdates() throws for a single refused row and stores nothing', () => {
    expect(() => store.storeUpdates([{ sheetId: 'no-such-sheet', update: new Uint8Array([0, 0]), userId: null }])).toThrow(/FOREIGN KEY/)
  })

  it('compact() writes the state, deletes the rows it covers, and later rows still get higher seqs than the state covers', () => {
    const loaded = store.loadDocument(lab.sheetId)
    const seqs = [1, 2, 3].map((i) => store.storeUpdates([{ sheetId: lab.sheetId, update: edit(store, lab.sheetId, `x${i}`), userId: null }])[0])
    const { doc } = store.loadDocument(lab.sheetId)
    const outcome = store.compact(lab.sheetId, Y.encodeStateAsUpdate(doc), loaded.uptoSeq, seqs)
    expect(outcome).toEqual({ ok: true, uptoSeq: seqs[2], deleted: 3 })
    expect(storedRows(lab, lab.sheetId)).toHaveLength(0)
    // The log is empty now: a new row must still be numbered after the state, or a reload would skip it.
    const [next] = store.storeUpdates([{ sheetId: lab.sheetId, update: edit(store, lab.sheetId, 'y'), userId: null }])
    expect(next).toBeGreaterThan(seqs[2])
    const reloaded = store.loadDocument(lab.sheetId)
    expect(reloaded.uptoSeq).toBe(seqs[2])
    expect(reloaded.seqs).toEqual([next])
    expect(firstFormulaSource(reloaded.doc).startsWith('yx3x2x1')).toBe(true)
  })

  it('compact() refuses when the state row moved or rows exist that the caller has not seen, and changes nothing', () => {
    const loaded = store.loadDocument(lab.sheetId)
    const [s1] = store.storeUpdates([{ sheetId: lab.sheetId, update: edit(store, lab.sheetId, 'p'), userId: null }])
    const [s2] = store.storeUpdates([{ sheetId: lab.sheetId, update: edit(store, lab.sheetId, 'q'), userId: null }])
    const state = Y.encodeStateAsUpdate(store.loadDocument(lab.sheetId).doc)
    const moved = store.compact(lab.sheetId, state, loaded.uptoSeq + 1, [s1, s2])
    expect(moved).toMatchObject({ ok: false, uptoSeq: loaded.uptoSeq })
    expect(moved.ok ? '' : moved.reason).toMatch(/state row moved/)
    // Knowing only s2 while s1 is also in the range: another writer's row would be deleted unseen.
    const unseen = store.compact(lab.sheetId, state, loaded.uptoSeq, [s2])
    expect(unseen).toMatchObject({ ok: false, uptoSeq: loaded.uptoSeq })
    expect(unseen.ok ? '' : unseen.reason).toMatch(/2 rows up to seq/)
    expect(storedRows(lab, lab.sheetId).map((r) => r.seq)).toEqual([s1, s2])
    expect(store.loadDocument(lab.sheetId).uptoSeq).toBe(loaded.uptoSeq)
  })
})
