// Entries of the cells list that are not cells (left by a faulty client or stored before the server checked updates)
// become invalid-cell placeholders the page shows, instead of failing the whole sheet on `e.get is not a function`.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { NOT_A_CELL, cellToMap, cellsOf, entryCells, entryIndex } from '../../../shared/doc/sheetDoc'
import { cellIssues } from '../../../src/components/sheet/validity'
import type { SheetCell } from '../../../shared/schema/sheet'

function hostileDoc(): Y.Doc {
  const doc = new Y.Doc()
  const cells = cellsOf(doc) as unknown as Y.Array<unknown>
  cells.push([cellToMap({ kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV' }, 'c1')])
  cells.push(['a string', 42, null, { id: 'x', kind: 'note', text: 'plain' }])
  cells.push([cellToMap({ kind: 'parameter', name: { evil: 1 } as unknown as string, value: 1 }, 'c2')])
  cells.push([cellToMap({ kind: 'note', text: 'again' }, 'c1')])
  return doc
}

describe('entryCells', () => {
  it('keeps every entry in order: cells as cells, anything else as a placeholder named by its position', () => {
    const cells = entryCells(cellsOf(hostileDoc()) as unknown as Y.Array<unknown>)
    expect(cells.map((c) => c.id)).toEqual(['c1', 'entry-1', 'entry-2', 'entry-3', 'entry-4', 'c2', 'entry-6'])
    expect(cells.filter((c) => c.kind === NOT_A_CELL).map((c) => (c as { entry: string }).entry)).toEqual([
      'a string',
      'a number',
      'null',
      'a plain object',
      'a second cell with the id c1',
    ])
  })

  it('gives each placeholder and each malformed cell an invalid-cell message; a valid cell none', () => {
    const cells = entryCells(cellsOf(hostileDoc()) as unknown as Y.Array<unknown>) as SheetCell[]
    expect(cellIssues(cells[0])).toEqual([])
    expect(cellIssues(cells[1])).toEqual([{ path: '', message: 'this entry of the sheet is a string, not a cell' }])
    expect(cellIssues(cells[5]).map((i) => i.path)).toEqual(['name'])
  })

  it('finds the entry a placeholder stands for, so it can be deleted', () => {
    const cells = cellsOf(hostileDoc()) as unknown as Y.Array<unknown>
    expect(entryIndex(cells, 'c2')).toBe(5)
    expect(entryIndex(cells, 'entry-3')).toBe(3)
    expect(entryIndex(cells, 'entry-99')).toBe(-1)
    expect(entryIndex(cells, 'nope')).toBe(-1)
  })
})
