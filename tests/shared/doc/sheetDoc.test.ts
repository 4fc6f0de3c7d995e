// The document model: a sheet file becomes one Yjs document (cells as Y.Maps, formula sources and note texts as
// Y.Text, meta.title) and back, through memory and through the encoded update the database stores.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import {
  cellToMap,
  cellsOf,
  docFromUpdates,
  docToSheetFile,
  isTextField,
  mapToCell,
  metaOf,
  newCellId,
  sheetFileToDoc,
  sheetFileToUpdate,
} from '../../../shared/doc/sheetDoc'
import { parseSheetFile, type SheetFile } from '../../../shared/schema/sheet'

/** One cell of every kind, with the optional fields filled in (invented demo values). */
const EVERY_KIND: SheetFile = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Film B, every cell kind',
  cells: [
    { id: 'p1', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV', min: 1, max: 2, step: 0.01, description: 'gap' },
    { id: 'f1', kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 601)', unit: 'eV' },
    {
      id: 's1',
      kind: 'spectrum',
      name: 'filmB',
      source: 'uvvis-2026-03-02.csv',
      columns: {
        wavelength: { unit: 'nm', values: [400, 401.5, 403], quantity: 'wavelength' },
        T: { unit: '%', values: [12.5, null, 13.25], quantity: 'T' },
      },
    },
    { id: 'fit1', kind: 'fit', name: 'edge', method: 'model', x: 'E', y: 'alpha', model: 'alpha', parameters: [{ name: 'Eg', start: 1.5, min: 1, max: 2 }], unit: 'eV' },
    { id: 'sw1', kind: 'sweep', name: 'thick', parameter: 'd', from: 100, to: 3000, steps: 59, scale: 'log', unit: 'nm', outputs: ['A1'] },
    {
      id: 'fig1',
      kind: 'figure',
      name: 'fig1',
      traces: [{ x: 'E', y: 'alpha', label: 'model', style: 'line' }],
      x: { unit: 'nm', visibleBand: true },
      y: { scale: 'log', min: 1, max: 1e6 },
      marks: ['edge.Eg'],
    },
    { id: 'n1', kind: 'note', text: 'Edge model for the **annealed** film.' },
    {
      id: 'st1', kind: 'stack', name: 'coating', wavelength: 'lam', ambient: '1', angle: '0*deg', polarization: 'unpolarized',
      layers: [{ name: 'ITO', thickness: '120*nm', n: '1.9', k: '0.01' }],
      substrate: { name: 'glass', n: '1.52', k: '0', thickness: '1*mm', coherent: false },
    },
  ],
}

describe('sheetFileToDoc / docToSheetFile', () => {
  it('sheetFileToDoc() then docToSheetFile() gives back every cell kind unchanged, inline dataset columns included', () => {
    const back = docToSheetFile(sheetFileToDoc(EVERY_KIND))
    expect(back).toEqual(EVERY_KIND)
    expect(parseSheetFile(back).ok).toBe(true)
  })

  it('sheetFileToDoc() holds formula sources and note texts as Y.Text and every other field as a plain value', () => {
    const doc = sheetFileToDoc(EVERY_KIND)
    const maps = cellsOf(doc).toArray()
    expect(maps[1].get('source')).toBeInstanceOf(Y.Text)
    expect(maps[6].get('text')).toBeInstanceOf(Y.Text)
    // A spectrum's `source` is the name of the uploaded file, a label, not shared text.
    expect(maps[2].get('source')).toBe('uvvis-2026-03-02.csv')
    expect(maps[2].get('columns')).toEqual(EVERY_KIND.cells[2].kind === 'spectrum' ? EVERY_KIND.cells[2].columns : null)
    expect(metaOf(doc).get('title')).toBe('Film B, every cell kind')
    expect(isTextField('formula', 'source')).toBe(true)
    expect(isTextField('spectrum', 'source')).toBe(false)
    expect(isTextField('note', 'text')).toBe(true)
  })

  it('sheetFileToDoc() gives cells without an id a fresh, distinct one', () => {
    const file: SheetFile = { ...EVERY_KIND, cells: EVERY_KIND.cells.map(({ id: _id, ...rest }) => rest as SheetFile['cells'][number]) }
    const ids = docToSheetFile(sheetFileToDoc(file)).cells.map((c) => c.id)
    expect(new Set(ids).size).toBe(ids.length)
    for (const id of ids) expect(id).toMatch(/^c[0-9a-z]{9}$/)
    expect(newCellId()).not.toBe(newCellId())
  })

  it('sheetFileToUpdate() encodes a state that docFromUpdates() decodes to the same sheet file', () => {
    const update = sheetFileToUpdate(EVERY_KIND)
    expect(update).toBeInstanceOf(Uint8Array)
    expect(docToSheetFile(docFromUpdates([update]))).toEqual(EVERY_KIND)
  })

  it('docFromUpdates() applies a state and later edits in order', () => {
    const doc = sheetFileToDoc(EVERY_KIND)
    const state = Y.encodeStateAsUpdate(doc)
    const edits: Uint8Array[] = []
    doc.on('update', (u: Uint8Array) => edits.push(u))
    ;(cellsOf(doc).get(1).get('source') as Y.Text).insert(0, '0.5*')
    cellsOf(doc).get(0).set('value', 1.52)
    const file = docToSheetFile(docFromUpdates([state, ...edits]))
    expect(file.cells[1]).toMatchObject({ source: '0.5*grid(1.2*eV, 2.4*eV, 601)' })
    expect(file.cells[0]).toMatchObject({ value: 1.52 })
  })

  it('sheetFileToDoc() into a document that has cells replaces them (import over a sheet)', () => {
    const doc = sheetFileToDoc(EVERY_KIND)
    const small: SheetFile = { format: 'penumbra.sheet', version: 1, title: 'Small', cells: [{ id: 'q', kind: 'parameter', name: 'T', value: 300, unit: 'K' }] }
    sheetFileToDoc(small, doc)
    expect(docToSheetFile(doc)).toEqual(small)
  })

  it('docToSheetFile() inlines a stored dataset’s columns for a spectrum cell that points at it', () => {
    const file: SheetFile = {
      ...EVERY_KIND,
      cells: [{ id: 's1', kind: 'spectrum', name: 'filmB', datasetId: 'ds-7', columns: {} }],
    }
    const columns = { wavelength: { unit: 'nm', values: [500, 501] }, R: { unit: '%', values: [30.5, 30.25], quantity: 'R' } }
    const out = docToSheetFile(sheetFileToDoc(file), { datasetColumns: (id) => (id === 'ds-7' ? columns : undefined) })
    expect(out.cells[0]).toEqual({ id: 's1', kind: 'spectrum', name: 'filmB', datasetId: 'ds-7', columns })
    // Unknown dataset: the cell keeps what it holds.
    const kept = docToSheetFile(sheetFileToDoc(file), { datasetColumns: () => undefined })
    expect(kept.cells[0]).toMatchObject({ columns: {} })
  })

  it('docToSheetFile() skips entries that are not cell maps and names a cell without an id by its place', () => {
    const doc = sheetFileToDoc(EVERY_KIND)
    const cells = cellsOf(doc) as unknown as Y.Array<unknown>
    cells.insert(0, ['not a cell', 42])
    const anonymous = new Y.Map<unknown>()
    anonymous.set('kind', 'parameter')
    anonymous.set('name', 'q2')
    anonymous.set('value', 2)
    cells.push([anonymous])
    metaOf(doc).delete('title')
    const out = docToSheetFile(doc)
    expect(out.cells.length).toBe(EVERY_KIND.cells.length + 1)
    expect(out.cells[out.cells.length - 1]).toEqual({ id: `cell-${EVERY_KIND.cells.length + 2}`, kind: 'parameter', name: 'q2', value: 2 })
    expect(out.title).toBe('Untitled sheet')
  })

  it('cellToMap() and mapToCell() round-trip one cell and keep an explicit id', () => {
    const doc = new Y.Doc()
    const map = cellToMap({ kind: 'formula', name: 'A1', source: 'absorbed_fraction(alpha, d)', unit: '%' }, 'fixed-id')
    cellsOf(doc).push([map])
    expect(mapToCell(cellsOf(doc).get(0))).toEqual({ id: 'fixed-id', kind: 'formula', name: 'A1', source: 'absorbed_fraction(alpha, d)', unit: '%' })
  })

  it('two documents typing into one formula Y.Text merge to the same source', () => {
    const a = sheetFileToDoc(EVERY_KIND)
    const b = docFromUpdates([Y.encodeStateAsUpdate(a)])
    ;(cellsOf(a).get(1).get('source') as Y.Text).insert(0, '2*')
    const tb = cellsOf(b).get(1).get('source') as Y.Text
    tb.insert(tb.length, ' + 0')
    Y.applyUpdate(b, Y.encodeStateAsUpdate(a, Y.encodeStateVector(b)))
    Y.applyUpdate(a, Y.encodeStateAsUpdate(b, Y.encodeStateVector(a)))
    expect(docToSheetFile(a)).toEqual(docToSheetFile(b))
    expect(docToSheetFile(a).cells[1]).toMatchObject({ source: '2*grid(1.2*eV, 2.4*eV, 601) + 0' })
  })
})
