// The sheet file is strict: a field a cell (or a trace, axis, column, fit parameter) does not have is an error at
// its path, naming the right field when one is close — through the schema, POST /api/evaluate, the import route and
// the command-line evaluator — while an exported live document still imports.
import { describe, expect, it } from 'vitest'
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { parseSheetFile } from '../../../shared/schema/sheet'
import { cellToMap, cellsOf, docToSheetFile, sheetFileToDoc } from '../../../shared/doc/sheetDoc'
import { call, makeTestApp, seedLab } from '../../utils/server'

const sheet = (cells: unknown[]) => ({ format: 'penumbra.sheet', version: 1, title: 'Strict file', cells })
const base = [
  { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV' },
  { kind: 'formula', name: 'x', source: 'Eg * 2' },
  { kind: 'spectrum', name: 'm', columns: { E: { unit: 'eV', values: [1, 2, 3] }, alpha: { unit: '1/cm', values: [1, 2, 3] } } },
  { kind: 'parameter', name: 'd', value: 1 },
  { kind: 'parameter', name: 'n', value: 1 },
]
const withFit = (extra: Record<string, unknown>) => sheet([...base, { kind: 'fit', name: 'edge', method: 'tauc', x: 'd', y: 'n', from: 1, to: 2, ...extra }])

describe('parseSheetFile of unknown fields', () => {
  it('names cells[5].window of a fit cell and points at from/to', () => {
    const r = parseSheetFile(withFit({ window: [1.2, 1.6] }))
    expect(r).toEqual({ ok: false, issues: [{ path: 'cells[5].window', message: 'not a field of a fit cell; the window is from/to' }] })
  })

  it.each([
    [{ kind: 'parameter', name: 'a', value: 1, units: 'eV' }, 'cells[0].units', 'not a field of a parameter cell; did you mean unit?'],
    [{ kind: 'formula', name: 'a', source: '1', descripton: 'x' }, 'cells[0].descripton', 'not a field of a formula cell; did you mean description?'],
    [{ kind: 'note', text: 'x', colour: 'red' }, 'cells[0].colour', 'not a field of a note cell (its fields: id, kind, name, text)'],
    [{ kind: 'figure', traces: [{ x: 'a', y: 'b', colour: 'red' }] }, 'cells[0].traces[0].colour', 'not a field of a figure trace (its fields: x, y, label, style)'],
    [{ kind: 'figure', traces: [], x: { scal: 'log' } }, 'cells[0].x.scal', 'not a field of a figure axis; did you mean scale?'],
    [{ kind: 'spectrum', name: 's', columns: { w: { unit: 'nm', values: [1], qty: 'x' } } }, 'cells[0].columns.w.qty', expect.stringMatching(/^not a field of a spectrum column \(its fields: unit, values, quantity/)],
    [{ kind: 'sweep', name: 's', parameter: 'a', from: 1, to: 2, steps: 3, outputs: ['b'], points: 5 }, 'cells[0].points', 'not a field of a sweep cell; the number of points is steps'],
  ])('names the field of %j at its path', (cell, path, message) => {
    const r = parseSheetFile(sheet([cell]))
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.issues).toContainEqual({ path, message })
  })

  it('accepts the same cells without the stray field', () => {
    expect(parseSheetFile(withFit({})).ok).toBe(true)
  })
})

describe('the exported live document', () => {
  it('leaves out fields a cell map holds beyond its schema, so export → import round-trips', () => {
    const parsed = parseSheetFile(withFit({}))
    if (!parsed.ok) throw new Error('fixture')
    const doc = sheetFileToDoc(parsed.value)
    cellsOf(doc).get(0).set('collapsed', true)
    cellsOf(doc).push([cellToMap({ kind: 'note', text: 'hello' }, 'n1')])
    const exported = docToSheetFile(doc)
    expect(Object.keys(exported.cells[0])).not.toContain('collapsed')
    const again = parseSheetFile(JSON.parse(JSON.stringify(exported)))
    expect(again.ok).toBe(true)
  })
})

describe('the routes and the command line', () => {
  it('POST /api/evaluate answers 400 naming cells[5].window', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.viewer.cookie).post('/api/evaluate', withFit({ window: [1.2, 1.6] }))
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([{ path: 'cells[5].window', message: 'not a field of a fit cell; the window is from/to' }])
  })

  it('POST /api/labs/:labId/sheets (import) answers 400 naming the field', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, withFit({ window: [1.2, 1.6] }))
    expect(res.status).toBe(400)
    expect(JSON.stringify(res.body)).toContain('not a field of a fit cell; the window is from/to')
  })

  it('npm run evaluate exits 2 naming cells[5].window', () => {
    const root = join(__dirname, '../../..')
    const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/evaluate.ts', '-'], { cwd: root, input: JSON.stringify(withFit({ window: [1.2, 1.6] })), encoding: 'utf8', timeout: 110000 })
    expect(r.status).toBe(2)
    expect(r.stderr).toContain('cells[5].window: not a field of a fit cell; the window is from/to')
  })
})
