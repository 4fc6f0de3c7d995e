// The sheet document's shape, held by the server: an editor's update that would put anything but a valid cell into
// the cells list is refused (1007, counted, neither stored nor relayed) and everyone else goes on; the edits the app
// makes (new cells, typing, field changes, moves, deletes, undo, import) all pass.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellToMap, cellsOf, docToSheetFile, mapToCell, metaOf } from '../../shared/doc/sheetDoc'
import { parseSheetFile } from '../../shared/schema/sheet'
import { loadDocument } from '../../server/services/documents'
import { CLOSE } from '../../server/collab/index'
import { storedRows, until } from './support/fixture'
import { syncFrame } from './support/frames'
import { useCollab } from './support/useCollab'

type CellMap = Y.Map<unknown>

const byId = (doc: Y.Doc, id: string) => cellsOf(doc).toArray().find((m) => m instanceof Y.Map && m.get('id') === id) as CellMap | undefined

/** The update `change` makes to a copy of the stored document. */
function editOf(base: Y.Doc, change: (doc: Y.Doc) => void): Uint8Array {
  const doc = new Y.Doc()
  Y.applyUpdate(doc, Y.encodeStateAsUpdate(base))
  const sv = Y.encodeStateVector(doc)
  change(doc)
  return Y.encodeStateAsUpdate(doc, sv)
}

const bad: [string, (doc: Y.Doc) => void, RegExp][] = [
  ['a string in the cells list', (d) => (cellsOf(d) as unknown as Y.Array<unknown>).push(['hello']), /only cells; this update puts a string/],
  ['a number in the cells list', (d) => (cellsOf(d) as unknown as Y.Array<unknown>).push([42]), /only cells; this update puts a number/],
  ['null in the cells list', (d) => (cellsOf(d) as unknown as Y.Array<unknown>).push([null]), /only cells; this update puts null/],
  ['a plain object in the cells list', (d) => (cellsOf(d) as unknown as Y.Array<unknown>).push([{ id: 'p', kind: 'note', text: 'x' }]), /puts a plain object/],
  ['a list in the cells list', (d) => (cellsOf(d) as unknown as Y.Array<unknown>).push([new Y.Array()]), /puts a list/],
  ['a cell whose name is an object', (d) => cellsOf(d).push([cellToMap({ kind: 'parameter', name: { evil: 1 } as unknown as string, value: 1 }, 'cq')]), /name of a parameter cell cannot be a plain object/],
  ['a cell reusing another cell’s id', (d) => cellsOf(d).push([cellToMap({ kind: 'parameter', name: 'q', value: 1 }, 'cEg')]), /reuses the id "cEg"/],
  ['two new cells with one id', (d) => cellsOf(d).push([cellToMap({ kind: 'parameter', name: 'q', value: 1 }, 'cz'), cellToMap({ kind: 'parameter', name: 'r', value: 1 }, 'cz')]), /reuses the id "cz"/],
  ['a cell of an unknown kind', (d) => cellsOf(d).push([cellToMap({ kind: 'window', name: 'w' } as never, 'cw')]), /known kind .*not "window"/],
  ['a cell without a kind', (d) => { const m = new Y.Map(); m.set('id', 'ck'); m.set('name', 'k'); cellsOf(d).push([m]) }, /known kind .*not none/],
  ['a new cell lacking a required field', (d) => cellsOf(d).push([cellToMap({ kind: 'parameter', name: 'q' } as never, 'cr')]), /parameter cell lacks its value/],
  ['an unknown field on a cell', (d) => byId(d, 'cEg')!.set('window', [1, 2]), /"window" is not a field of a parameter cell/],
  ['a value of the wrong type on a cell', (d) => byId(d, 'cEg')!.set('value', 'high'), /value of a parameter cell cannot be a string/],
  ['a non-finite value', (d) => byId(d, 'cd')!.set('min', Number.POSITIVE_INFINITY), /min of a parameter cell/],
  ['a changed id', (d) => byId(d, 'cEg')!.set('id', 'cd'), /a cell's id cannot change/],
  ['a changed kind', (d) => byId(d, 'cEg')!.set('kind', 'note'), /a cell's kind cannot change/],
  ['a removed required field', (d) => byId(d, 'cEg')!.delete('name'), /a cell's name cannot be removed/],
  ['a map nested in a formula source', (d) => (byId(d, 'cx')!.get('source') as Y.Text).insertEmbed(0, new Y.Map() as never), /only characters/],
  ['another part of the document', (d) => d.getMap('other').set('x', 1), /no part named "other"/],
  ['a title that is not text', (d) => metaOf(d).set('title', { x: 1 }), /title must be text/],
  ['other sheet details', (d) => metaOf(d).set('pad', 'x'), /only its title, not "pad"/],
]

describe('collab: updates that would break the sheet document', () => {
  const t = useCollab()

  it.each(bad)('refuses %s with 1007; nothing stored or relayed, the others stay connected', async (_what, change, reason) => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const before = JSON.stringify(docToSheetFile(watcher.doc))
    const editor = await t.raw('editor')
    editor.ws.send(syncFrame(2, editOf(await loadDocument(t.lab.handle.db, t.lab.sheetId), change)))
    const closed = await editor.closed
    expect(closed.code).toBe(CLOSE.malformed)
    expect(closed.reason).toMatch(/^edit refused: /)
    expect(closed.reason).toMatch(reason)
    expect(t.server.collab.stats().counters.refusedUpdates).toBe(1)
    expect(await storedRows(t.lab)).toBe(0)
    // the watcher is still live and still gets valid edits; its document never saw the refused one
    const other = await t.raw('owner')
    other.ws.send(syncFrame(2, editOf(await loadDocument(t.lab.handle.db, t.lab.sheetId), (d) => byId(d, 'cd')!.set('value', 900))))
    await until(() => byId(watcher.doc, 'cd')?.get('value') === 900, 'a later valid edit at the watcher')
    const after = docToSheetFile(watcher.doc)
    expect(after.cells.map((c) => c.id)).toEqual(JSON.parse(before).cells.map((c: { id: string }) => c.id))
    expect(parseSheetFile(after).ok).toBe(true)
    expect(other.isOpen()).toBe(true)
  })
})

const good: [string, (doc: Y.Doc) => void, (doc: Y.Doc) => boolean][] = [
  ['a new cell of each kind', (d) => cellsOf(d).push([
    cellToMap({ kind: 'parameter', name: 'T', value: 300, unit: 'K' }, 'n1'),
    cellToMap({ kind: 'formula', name: 'y', source: 'T*2' }, 'n2'),
    cellToMap({ kind: 'spectrum', name: 'm', columns: { wavelength: { unit: 'nm', values: [400, 500] } } }, 'n3'),
    cellToMap({ kind: 'fit', name: 'f', method: 'tauc', x: 'm', y: 'm', from: 1, to: 2 }, 'n4'),
    cellToMap({ kind: 'sweep', name: 's', parameter: 'T', from: 1, to: 2, steps: 3, outputs: ['y'] }, 'n5'),
    cellToMap({ kind: 'figure', traces: [{ x: 'm.wavelength', y: 'm.wavelength' }] }, 'n6'),
    cellToMap({ kind: 'note', text: 'hello' }, 'n7'),
  ]), (d) => cellsOf(d).length === 11],
  ['typing in a formula', (d) => (byId(d, 'cx')!.get('source') as Y.Text).insert(4, '+1'), (d) => (byId(d, 'cx')?.get('source') as Y.Text).toString() === 'Eg*2+1'],
  ['a changed and a removed optional field', (d) => { byId(d, 'cEg')!.set('value', 1.6); byId(d, 'cEg')!.delete('max') }, (d) => byId(d, 'cEg')?.get('value') === 1.6 && !byId(d, 'cEg')!.has('max')],
  ['a renamed cell', (d) => byId(d, 'cd')!.set('name', 'thickness'), (d) => byId(d, 'cd')?.get('name') === 'thickness'],
  ['a moved cell (deleted and inserted again with its id)', (d) => {
    const copy = cellToMap(mapToCell(byId(d, 'cEg')!), 'cEg')
    d.transact(() => { cellsOf(d).delete(0, 1); cellsOf(d).insert(2, [copy]) })
  }, (d) => cellsOf(d).get(2)?.get('id') === 'cEg' && cellsOf(d).length === 4],
  ['a deleted cell', (d) => cellsOf(d).delete(3, 1), (d) => cellsOf(d).length === 3],
  ['an import that replaces every cell with cells of the same ids', (d) => d.transact(() => {
    const cells = docToSheetFile(d).cells
    cellsOf(d).delete(0, cellsOf(d).length)
    cellsOf(d).push(cells.map((c) => cellToMap(c, c.id)))
  }), (d) => cellsOf(d).length === 4],
  ['a new title', (d) => metaOf(d).set('title', 'Annealed films'), (d) => metaOf(d).get('title') === 'Annealed films'],
]

describe('collab: the edits the app makes', () => {
  const t = useCollab()

  it.each(good)('accepts %s, stores and relays it', async (_what, change, seen) => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    editor.ws.send(syncFrame(2, editOf(await loadDocument(t.lab.handle.db, t.lab.sheetId), change)))
    await until(() => seen(watcher.doc), 'the edit at the watcher')
    expect(seen(await loadDocument(t.lab.handle.db, t.lab.sheetId))).toBe(true)
    expect(editor.isOpen()).toBe(true)
    expect(t.server.collab.stats().counters.refusedUpdates).toBe(0)
  })

  it('accepts an undone delete and an undone move (the undo manager re-creates the maps)', async () => {
    const a = t.connect('editor')
    const watcher = t.connect('editor2')
    await Promise.all([a.synced(), watcher.synced()])
    const origin = { who: 'me' }
    const undo = new Y.UndoManager(cellsOf(a.doc), { trackedOrigins: new Set([origin]), captureTimeout: 0 })
    a.doc.transact(() => cellsOf(a.doc).delete(1, 1), origin)
    await until(() => cellsOf(watcher.doc).length === 3, 'the delete at the watcher')
    undo.stopCapturing()
    const copy = cellToMap(mapToCell(byId(a.doc, 'cEg')!), 'cEg')
    a.doc.transact(() => { cellsOf(a.doc).delete(0, 1); cellsOf(a.doc).insert(2, [copy]) }, origin)
    await until(() => cellsOf(watcher.doc).get(2)?.get('id') === 'cEg', 'the move at the watcher')
    undo.undo()
    undo.undo()
    await until(() => cellsOf(watcher.doc).length === 4 && cellsOf(watcher.doc).get(0)?.get('id') === 'cEg', 'both undone at the watcher')
    expect(docToSheetFile(watcher.doc).cells.map((c) => c.id)).toEqual(['cEg', 'cd', 'cx', 'cn'])
    expect(parseSheetFile(docToSheetFile(watcher.doc)).ok).toBe(true)
    expect(t.server.collab.stats().counters.refusedUpdates).toBe(0)
    undo.destroy()
  })
})
