// Uploads of measured spectra, stored datasets, their place in sheet files, and CSV downloads. The exports are
// invented (the fictional Halvorsen Thin-Film Lab); status codes and wording are the issue's contract.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { count } from 'drizzle-orm'
import { call, makeTestApp, seedLab, type SeededLab, type TestApp } from '../utils/server'
import { datasets } from '../../server/db/tables'
import { loadSheetFile } from '../../server/services/documents'
import { clearDatasetCache } from '../../server/services/datasets'

const FILM_B = 'Halvorsen Thin-Film Lab, film B\nWavelength (nm),%T,R%\n420,81,10\n400,80,9\n410,80.5,9.5\n'

let t: TestApp
let lab: SeededLab

beforeEach(async () => {
  t = await makeTestApp()
  lab = await seedLab(t)
})
afterEach(() => t.close())

const storedCount = async () => (await t.db.select({ n: count() }).from(datasets))[0].n
const post = (path: string, text: string, options?: object, name = 'film B.csv') => {
  const r = call(t, lab.users.editor.cookie).post(path).attach('file', Buffer.from(text), name)
  return options ? r.field('options', JSON.stringify(options)) : r
}

describe('POST /api/sheets/:sheetId/datasets/preview', () => {
  it('answers the columns with quantities, units and guesses, the samples, the first rows and warnings, storing nothing', async () => {
    const res = await post(`/api/sheets/${lab.editorSheetId}/datasets/preview`, FILM_B)
    expect(res.status).toBe(200)
    expect(res.body.columns.map((c: { key: string; quantity: string; unit: string; guessed: boolean; count: number; min: number; max: number }) => [c.key, c.quantity, c.unit, c.guessed, c.count, c.min, c.max]))
      .toEqual([['c1', 'wavelength', 'nm', false, 3, 400, 420], ['c2', 'T', '%', false, 3, 80, 81], ['c3', 'R', '%', false, 3, 9, 10]])
    expect(res.body.samples).toHaveLength(1)
    expect(res.body.rows[0]).toEqual([420, 81, 10])
    expect(res.body.warnings.join(' ')).toMatch(/not in order; the rows were sorted/)
    expect(res.body.name).toBe('film_B')
    expect(await storedCount()).toBe(0)
  })

  it('reports a mapping problem with the option that would get past it', async () => {
    const res = await post(`/api/sheets/${lab.editorSheetId}/datasets/preview`, 'nm,%T\n400,1\n400,2\n')
    expect(res.status).toBe(200)
    expect(res.body.problem).toMatchObject({ offer: 'averageDuplicates', issues: [{ path: 'line 3, column 1', message: 'wavelength 400 also on line 2' }] })
  })
})

describe('POST /api/sheets/:sheetId/datasets', () => {
  it('stores the mapped columns sorted by x and answers 201 with their names, quantities, units and counts', async () => {
    const res = await post(`/api/sheets/${lab.editorSheetId}/datasets`, FILM_B, { name: 'filmB', columns: [{ key: 'c1' }, { key: 'c2', name: 'T' }] })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ name: 'filmB', source: 'film B.csv', columns: [{ name: 'wavelength', quantity: 'wavelength', unit: 'nm', count: 3 }, { name: 'T', quantity: 'T', unit: '%', count: 3 }] })
    clearDatasetCache()
    const got = await call(t, lab.users.viewer.cookie).get(`/api/datasets/${res.body.id}`)
    expect(got.status).toBe(200)
    expect(got.body.columns).toEqual([
      { name: 'wavelength', quantity: 'wavelength', unit: 'nm', values: [400, 410, 420] },
      { name: 'T', quantity: 'T', unit: '%', values: [80, 80.5, 81] },
    ])
  })

  it('without options imports the preview\'s guesses', async () => {
    const res = await post(`/api/sheets/${lab.editorSheetId}/datasets`, FILM_B)
    expect(res.status).toBe(201)
    expect(res.body.columns.map((c: { name: string }) => c.name)).toEqual(['wavelength', 'T', 'R'])
  })

  it('answers 400 naming the line and column of text among the numbers, and stores nothing', async () => {
    const res = await post(`/api/sheets/${lab.editorSheetId}/datasets`, 'nm,T\n400,1\n410,2\n420,x\n430,4\n')
    expect(res.status).toBe(400)
    expect(res.body.error).toBe('Line 4, column 2: "x" is not a number (column T). The numbers start on line 2; text is allowed only above them.')
    expect(res.body.issues).toEqual([{ path: 'line 4, column 2', message: '"x" is not a number (column T)' }])
    expect(await storedCount()).toBe(0)
  })

  it('answers 400 with the offer for empty cells, and 201 once the rows may be dropped', async () => {
    const text = 'nm,%T\n400,1\n410,\n420,3\n'
    const refused = await post(`/api/sheets/${lab.editorSheetId}/datasets`, text)
    expect(refused.status).toBe(400)
    expect(refused.body.offer).toBe('dropEmptyRows')
    expect(refused.body.issues[0].path).toBe('line 3, column 2')
    const ok = await post(`/api/sheets/${lab.editorSheetId}/datasets`, text, { dropEmptyRows: true })
    expect(ok.status).toBe(201)
    expect(ok.body.columns[0].count).toBe(2)
  })

  it('answers 400 for options that are not JSON or name an unknown quantity', async () => {
    const bad = await call(t, lab.users.editor.cookie).post(`/api/sheets/${lab.editorSheetId}/datasets`).attach('file', Buffer.from(FILM_B), 'a.csv').field('options', '{nope')
    expect(bad.status).toBe(400)
    expect(bad.body.issues).toEqual([{ path: 'options', message: 'not valid JSON' }])
    const quantity = await post(`/api/sheets/${lab.editorSheetId}/datasets`, FILM_B, { columns: [{ key: 'c1', quantity: 'colour' }] })
    expect(quantity.status).toBe(400)
    expect(quantity.body.issues[0].path).toBe('columns[0].quantity')
  })

  it('answers 400 without a file', async () => {
    const res = await call(t, lab.users.editor.cookie).post(`/api/sheets/${lab.editorSheetId}/datasets`).field('options', '{}')
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([{ path: 'file', message: 'required' }])
  })

  it('answers 413 with the limit in words for a file over the size limit', async () => {
    const small = await makeTestApp({ config: { maxBodyBytes: 64 * 1024 } })
    try {
      const l = await seedLab(small)
      const big = `nm,T\n${Array.from({ length: 8000 }, (_, i) => `${400 + i * 0.01},${i % 100}`).join('\n')}\n`
      const res = await call(small, l.users.editor.cookie).post(`/api/sheets/${l.editorSheetId}/datasets`).attach('file', Buffer.from(big), 'big.csv')
      expect(res.status).toBe(413)
      expect(res.body.error).toBe('The uploaded file is larger than 64 KB, the most this server accepts.')
    } finally {
      await small.close()
    }
  })
})

describe('GET /api/datasets/:datasetId', () => {
  it('answers 404 to a member of another lab', async () => {
    const created = await post(`/api/sheets/${lab.editorSheetId}/datasets`, FILM_B)
    const other = await seedLab(t, 'Other Lab')
    const res = await call(t, other.users.owner.cookie).get(`/api/datasets/${created.body.id}`)
    expect(res.status).toBe(404)
    expect(res.body.error).toBe('No such dataset, or you are not a member of its lab.')
  })
})

const SHEET_WITH_SPECTRUM = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Film B edge',
  cells: [
    { kind: 'spectrum', name: 'filmB', source: 'filmB.csv', columns: { wavelength: { unit: 'nm', quantity: 'wavelength', values: [400, 410, 420] }, T: { unit: '%', quantity: 'T', values: [80, null, 81] } } },
    { kind: 'formula', name: 'Tfrac', source: 'filmB.T' },
    { kind: 'figure', traces: [{ x: 'filmB.wavelength', y: 'Tfrac' }] },
  ],
}

describe('sheet files with inline spectra', () => {
  it('POST /api/labs/:labId/sheets stores the columns as a dataset; the document keeps only metadata and the id', async () => {
    const res = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, SHEET_WITH_SPECTRUM)
    expect(res.status).toBe(201)
    expect(await storedCount()).toBe(1)
    const cell = (await loadSheetFile(t.db, res.body.id)).cells[0] as { datasetId?: string; columns: Record<string, { values?: unknown; count?: number; min?: number; max?: number }> }
    expect(cell.datasetId).toMatch(/^ds_/)
    expect(cell.columns.T).toEqual({ unit: '%', quantity: 'T', count: 3, min: 80, max: 81 })
    expect(cell.columns.wavelength.values).toBeUndefined()
  })

  it('GET /api/sheets/:sheetId/file writes the dataset\'s numbers back into the spectrum cell', async () => {
    const created = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, SHEET_WITH_SPECTRUM)
    clearDatasetCache()
    const res = await call(t, lab.users.viewer.cookie).get(`/api/sheets/${created.body.id}/file`)
    expect(res.status).toBe(200)
    const file = JSON.parse(res.text)
    expect(file.cells[0].columns.wavelength.values).toEqual([400, 410, 420])
    expect(file.cells[0].columns.T.values).toEqual([80, null, 81])
  })

  it('GET /api/sheets/:sheetId/cells/:cellId/csv writes a spectrum\'s columns and a formula on its grid, units in the header', async () => {
    const created = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, SHEET_WITH_SPECTRUM)
    const cells = (await loadSheetFile(t.db, created.body.id)).cells
    const spectrum = await call(t, lab.users.viewer.cookie).get(`/api/sheets/${created.body.id}/cells/${cells[0].id}/csv`)
    expect(spectrum.status).toBe(200)
    expect(spectrum.headers['content-type']).toMatch(/^text\/csv/)
    expect(spectrum.headers['content-disposition']).toContain('Film B edge - filmB.csv')
    expect(spectrum.text).toBe('filmB.wavelength (nm),filmB.T (%)\r\n400,80\r\n410,\r\n420,81\r\n')
    const formula = await call(t, lab.users.viewer.cookie).get(`/api/sheets/${created.body.id}/cells/${cells[1].id}/csv`)
    expect(formula.status).toBe(200)
    expect(formula.text).toBe('filmB.wavelength (nm),Tfrac\r\n400,0.8\r\n410,\r\n420,0.81\r\n')
  })

  it('GET /api/sheets/:sheetId/cells/:cellId/csv answers 404 for a cell of no such id', async () => {
    const res = await call(t, lab.users.viewer.cookie).get(`/api/sheets/${lab.editorSheetId}/cells/nope/csv`)
    expect(res.status).toBe(404)
  })
})

describe('POST /api/sheets/:sheetId/datasets with a JSON body', () => {
  it('stores a spectrum cell\'s inline columns as they are and answers their metadata', async () => {
    const res = await call(t, lab.users.editor.cookie).post(`/api/sheets/${lab.editorSheetId}/datasets`, {
      name: 'filmB', source: 'filmB.csv', columns: [{ name: 'wavelength', quantity: 'wavelength', unit: 'nm', values: [420, 400] }, { name: 'T', unit: '%', values: [81, null] }],
    })
    expect(res.status).toBe(201)
    expect(res.body.columns).toEqual([{ name: 'wavelength', quantity: 'wavelength', unit: 'nm', count: 2, min: 400, max: 420 }, { name: 'T', quantity: '', unit: '%', count: 2, min: 81, max: 81 }])
    const got = await call(t, lab.users.viewer.cookie).get(`/api/datasets/${res.body.id}`)
    expect(got.body.columns[1]).toEqual({ name: 'T', unit: '%', values: [81, null] })
  })

  it('answers 400 naming the column whose name formulas cannot use, and 403 for a reviewer', async () => {
    const bad = await call(t, lab.users.editor.cookie).post(`/api/sheets/${lab.editorSheetId}/datasets`, { name: 'filmB', columns: [{ name: '2T', unit: '%', values: [1] }] })
    expect(bad.status).toBe(400)
    expect(bad.body.issues[0].path).toBe('columns[0].name')
    const reviewer = await call(t, lab.users.reviewer.cookie).post(`/api/sheets/${lab.editorSheetId}/datasets`, { name: 'filmB', columns: [{ name: 'T', unit: '%', values: [1] }] })
    expect(reviewer.status).toBe(403)
  })
})
