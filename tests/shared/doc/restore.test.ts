/** restoreCells(doc, cells, origin): a snapshot's cells back into a live document as one undoable change. */
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile, restoreCells, sheetFileToDoc } from '../../../shared/doc/sheetDoc'
import type { SheetFile } from '../../../shared/schema/sheet'

const FROZEN: SheetFile = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Film B',
  cells: [
    { id: 'a', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
    { id: 'b', kind: 'formula', name: 'lam', source: 'photon_wavelength(Eg)', unit: 'nm' },
    { id: 'c', kind: 'note', text: 'frozen note' },
  ],
}

describe('restoreCells(doc, cells, origin)', () => {
  it('makes the document hold the snapshot’s cells in its order, keeping unchanged cells, and one undo takes it back', () => {
    const doc = sheetFileToDoc(FROZEN)
    const keptMap = cellsOf(doc).get(1)
    const me = { person: 'editor' }
    const undo = new Y.UndoManager(cellsOf(doc), { trackedOrigins: new Set([me]) })
    doc.transact(() => {
      const cells = cellsOf(doc)
      ;(cells.get(0) as Y.Map<unknown>).set('value', 1.6)
      cells.delete(2, 1)
      cells.push([new Y.Map(Object.entries({ id: 'd', kind: 'formula', name: 'x', source: '1' }))])
    }, me)
    undo.stopCapturing()
    const edited = docToSheetFile(doc)
    let updates = 0
    doc.on('update', () => updates++)
    restoreCells(doc, FROZEN.cells, me)
    expect(updates).toBe(1)
    expect(docToSheetFile(doc).cells).toEqual(FROZEN.cells)
    expect(cellsOf(doc).get(1)).toBe(keptMap)
    undo.undo()
    expect(docToSheetFile(doc).cells).toEqual(edited.cells)
  })
})
