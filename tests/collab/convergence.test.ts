// Two editors typing at once into one formula's Y.Text through the real server converge to one text, the server's
// copy and the database agree, and the engine evaluates the same sheet for both.
import { describe, expect, it } from 'vitest'
import * as Y from 'yjs'
import { cellsOf, docToSheetFile } from '../../shared/doc/sheetDoc'
import { loadDocument } from '../../server/services/documents'
import { evaluateSheet } from '../../shared/engine/index'
import { until } from './support/fixture'
import { useCollab } from './support/useCollab'

function formulaText(doc: Y.Doc, name: string): Y.Text {
  const cell = cellsOf(doc)
    .toArray()
    .find((m) => m.get('name') === name)
  if (!cell) throw new Error(`no cell ${name}`)
  return cell.get('source') as Y.Text
}

describe('collab: two editors in one formula', () => {
  const t = useCollab()

  it('handleUpgrade() gives an editor the stored sheet on first sync', async () => {
    const a = t.connect('editor')
    await a.synced()
    const file = docToSheetFile(a.doc)
    expect(file.title).toBe('Edge model of film B')
    expect(file.cells.map((c) => c.name)).toEqual(['Eg', 'd', 'x', undefined])
    expect(formulaText(a.doc, 'x').toString()).toBe('Eg*2')
  })

  it('concurrent typing from two editors converges to the same text, server copy and stored document', async () => {
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    const ta = formulaText(a.doc, 'x')
    const tb = formulaText(b.doc, 'x')
    // Interleaved bursts without waiting for each other: a appends "+1" pieces at the end, b prefixes "(" pieces.
    for (let round = 0; round < 40; round++) {
      ta.insert(ta.length, '+1')
      tb.insert(0, ' ')
      if (round % 7 === 0) await new Promise((r) => setTimeout(r, 1))
    }
    const expectedLength = 'Eg*2'.length + 40 * 2 + 40
    await until(() => ta.length === expectedLength && tb.length === expectedLength, 'both editors to see every keystroke')
    expect(ta.toString()).toBe(tb.toString())
    expect(ta.toString()).toBe(' '.repeat(40) + 'Eg*2' + '+1'.repeat(40))
    await t.server.collab.close()
    const stored = await loadDocument(t.lab.handle.db, t.lab.sheetId)
    expect(formulaText(stored, 'x').toString()).toBe(ta.toString())
  })

  it('concurrent edits of one formula give both editors the same evaluation results', async () => {
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    const ta = formulaText(a.doc, 'x')
    const tb = formulaText(b.doc, 'x')
    ta.insert(ta.length, ' + Eg')
    tb.insert(0, '3*')
    await until(() => ta.toString() === tb.toString() && ta.length === 'Eg*2'.length + 5 + 2, 'the two edits to meet')
    expect(ta.toString()).toBe('3*Eg*2 + Eg')
    const ra = evaluateSheet(docToSheetFile(a.doc))
    const rb = evaluateSheet(docToSheetFile(b.doc))
    expect(ra).toEqual(rb)
    const x = ra.cells.find((c) => c.name === 'x')
    expect(x?.status).toBe('ok')
    // 3·Eg·2 + Eg = 7 × 1.48 eV = 10.36 eV (closed form); relative tolerance 1e-12 for the eV ↔ J round trip.
    expect(Math.abs((x?.value as number) / 10.36 - 1)).toBeLessThan(1e-12)
  })
})
