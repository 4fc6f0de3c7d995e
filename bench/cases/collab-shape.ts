/**
 * collab-shape: the cost of checking one writer's update against the sheet document's shape, two ways.
 *   decoded   the server's way (server/collab/shape.ts): Y.decodeUpdate, then the update's own structs, looking up in
 *             the live document only the items they attach to
 *   scratch   apply the update to a scratch copy of the document (a copy per update) and validate the copy's cells
 *             with the sheet schema
 * against the bare parse the server did before the check (Y.decodeUpdate alone), for a keystroke in a formula and for
 * a new cell, on the demo thickness study grown to 200 cells (a large sheet).
 */
import { readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import * as Y from 'yjs'
import { cellToMap, cellsOf, docToSheetFile, sheetFileToDoc } from '../../shared/doc/sheetDoc'
import { parseSheetFile, parseSheetFileText } from '../../shared/schema/sheet'
import { checkShape } from '../../server/collab/shape'
import { measurePair, printBench } from '../harness'

const examples = join(dirname(fileURLToPath(import.meta.url)), '../../examples')

function largeSheet(): Y.Doc {
  const parsed = parseSheetFileText(readFileSync(join(examples, 'thickness-study.penumbra.json'), 'utf8'))
  if (!parsed.ok) throw new Error('the demo sheet does not parse')
  const doc = sheetFileToDoc(parsed.value)
  const extra = Array.from({ length: 200 - cellsOf(doc).length }, (_, i) => cellToMap({ kind: 'formula', name: `f${i}`, source: `${i} * 2 + sqrt(${i})`, unit: 'eV' }))
  cellsOf(doc).push(extra)
  return doc
}

function updateOf(doc: Y.Doc, change: (d: Y.Doc) => void): Uint8Array {
  const copy = new Y.Doc()
  Y.applyUpdate(copy, Y.encodeStateAsUpdate(doc))
  const sv = Y.encodeStateVector(copy)
  change(copy)
  return Y.encodeStateAsUpdate(copy, sv)
}

function scratchCheck(doc: Y.Doc, update: Uint8Array): boolean {
  const scratch = new Y.Doc()
  Y.applyUpdate(scratch, Y.encodeStateAsUpdate(doc))
  Y.applyUpdate(scratch, update)
  const cells = cellsOf(scratch).toArray()
  const ok = cells.every((m) => m instanceof Y.Map) && parseSheetFile(docToSheetFile(scratch)).ok
  scratch.destroy()
  return ok
}

export default async function run(): Promise<void> {
  const doc = largeSheet()
  const formula = cellsOf(doc)
    .toArray()
    .find((m) => m.get('kind') === 'formula')!
  const index = cellsOf(doc).toArray().indexOf(formula)
  const cases: [string, Uint8Array][] = [
    ['keystroke', updateOf(doc, (d) => (cellsOf(d).get(index).get('source') as Y.Text).insert(3, '1'))],
    ['new-cell', updateOf(doc, (d) => cellsOf(d).push([cellToMap({ kind: 'parameter', name: 'T', value: 300, unit: 'K' })]))],
  ]
  for (const [name, update] of cases) {
    if (checkShape(doc, Y.decodeUpdate(update)) !== null || !scratchCheck(doc, update)) throw new Error(`the ${name} update should pass both checks`)
    const [decoded, parseOnly] = measurePair(
      () => checkShape(doc, Y.decodeUpdate(update)),
      () => Y.decodeUpdate(update),
      { runs: 201, minTotalMs: 200 },
    )
    const [scratch] = measurePair(() => scratchCheck(doc, update), undefined, { runs: 21, minTotalMs: 200 })
    printBench(`collab-shape-${name} decoded`, decoded.medianMs, decoded.medianMs / parseOnly.medianMs, 'parse alone')
    printBench(`collab-shape-${name} scratch`, scratch.medianMs, scratch.medianMs / parseOnly.medianMs, 'parse alone')
  }
  console.log(`  (a 200-cell sheet; parse alone is Y.decodeUpdate, which the server ran before the check existed)`)
}
