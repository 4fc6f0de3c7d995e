/** Sheets over the API: create blank or from a sheet file, import errors by JSON path, rename, delete, export. */
import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import path from 'node:path'
import request from 'supertest'
import { call, makeTestApp, seedLab } from '../utils/server'
import { eq } from 'drizzle-orm'
import { loadSheetFile } from '../../server/services/documents'
import { sheetStates, sheetUpdates } from '../../server/db/tables'
import { CSRF_HEADER } from '../../shared/schema/api'
import { parseSheetFileText } from '../../shared/schema/sheet'

const EXAMPLE = path.resolve(__dirname, '../../examples/edge-model.penumbra.json')

const FILE = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Edge model of film B',
  cells: [
    { id: 'keep-me', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV', min: 1, max: 2 },
    { kind: 'formula', name: 'lambda_g', source: 'photon_wavelength(Eg)', unit: 'nm' },
    { kind: 'note', text: 'Edge model for the annealed film.' },
  ],
}

describe('POST /api/labs/:labId/sheets', () => {
  it('creates a blank sheet from {title}, listed with its author and times', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, { title: 'Thickness study' })
    expect(res.status).toBe(201)
    expect(res.headers.location).toBe(`/api/sheets/${res.body.id}`)
    expect(res.body).toMatchObject({ title: 'Thickness study', labId: lab.labId, labName: lab.labName, role: 'editor', createdBy: lab.users.editor.id, authorName: 'The editor', canDelete: true })
    expect((await loadSheetFile(t.db, res.body.id)).cells).toEqual([])
    const list = await call(t, lab.users.viewer.cookie).get(`/api/labs/${lab.labId}/sheets`)
    expect(list.body.sheets[0]).toMatchObject({ id: res.body.id, title: 'Thickness study', authorName: 'The editor' })
    expect(list.body.sheets).toHaveLength(3)
  })

  it('imports a sheet file: cells keep their ids, the others get one, and the document holds them', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, FILE)
    expect(res.status).toBe(201)
    expect(res.body.title).toBe('Edge model of film B')
    const stored = await loadSheetFile(t.db, res.body.id)
    expect(stored.cells.map((c) => c.kind)).toEqual(['parameter', 'formula', 'note'])
    expect(stored.cells[0].id).toBe('keep-me')
    expect(new Set(stored.cells.map((c) => c.id)).size).toBe(3)
    expect(stored.cells.every((c) => typeof c.id === 'string' && c.id.length > 0)).toBe(true)
  })

  it('imports {title, file} with the title overriding the file’s', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, { title: 'Copy of film B', file: FILE })
    expect(res.status).toBe(201)
    expect(res.body.title).toBe('Copy of film B')
  })

  it('imports an uploaded file (multipart, field "file")', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await request(t.app)
      .post(`/api/labs/${lab.labId}/sheets`)
      .set('Cookie', lab.users.editor.cookie)
      .set(CSRF_HEADER, '1')
      .attach('file', readFileSync(EXAMPLE), { filename: 'edge-model.penumbra.json', contentType: 'application/json' })
    expect(res.status).toBe(201)
    const expected = parseSheetFileText(readFileSync(EXAMPLE, 'utf8'))
    expect(expected.ok).toBe(true)
    if (expected.ok) expect(res.body.title).toBe(expected.value.title)
  })

  it('answers 400 naming every problem of a sheet file by its JSON path', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const broken = {
      format: 'penumbra.sheet',
      version: 1,
      title: 'Broken',
      cells: [
        { kind: 'parameter', name: 'Eg', unit: 'eV' },
        { kind: 'formula', name: '2bad', source: 'Eg*2' },
        { kind: 'hologram', name: 'h' },
      ],
    }
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, broken)
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([
      { path: 'cells[0].value', message: 'required' },
      { path: 'cells[1].name', message: 'must start with a letter and use only letters, digits and _' },
      { path: 'cells[2].kind', message: 'unknown cell kind; expected one of parameter, formula, spectrum, fit, sweep, figure, note, stack' },
    ])
    expect(res.body.error).toBe('The sheet file has problems: cells[0].value required (and 2 more).')
    expect((await call(t, lab.users.owner.cookie).get(`/api/labs/${lab.labId}/sheets`)).body.sheets).toHaveLength(2)
  })

  it('answers 400 naming a duplicate cell name and id by path', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const dup = { ...FILE, cells: [...FILE.cells, { id: 'keep-me', kind: 'parameter', name: 'Eg', value: 1 }] }
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, dup)
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([
      { path: 'cells[3].name', message: 'duplicate name "Eg" (also cells[0])' },
      { path: 'cells[3].id', message: 'duplicate id "keep-me" (also cells[0])' },
    ])
  })

  it('answers 400 with "cells[1].source: required" for a formula cell without a source', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, {
      format: 'penumbra.sheet', version: 1, title: 'No source',
      cells: [{ kind: 'parameter', name: 'd', value: 850, unit: 'nm' }, { kind: 'formula', name: 'A1', unit: '%' }],
    })
    expect(res.status).toBe(400)
    expect(res.body).toEqual({ error: 'The sheet file has problems: cells[1].source required.', issues: [{ path: 'cells[1].source', message: 'required' }] })
  })

  it('answers 400 naming a cell without a kind, and plain words for a wrong type or a too-small number', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, {
      format: 'penumbra.sheet', version: 1, title: 'Odd cells',
      cells: [{ name: 'a', value: 1 }, { kind: 'parameter', name: 'b', value: '1.5' }, { kind: 'sweep', name: 's', parameter: 'b', from: 0, to: 1, steps: 1, outputs: ['b'] }, 7],
    })
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([
      { path: 'cells[0].kind', message: 'required; one of parameter, formula, spectrum, fit, sweep, figure, note, stack' },
      { path: 'cells[1].value', message: 'must be a number, not a string' },
      { path: 'cells[2].steps', message: 'must be at least 2' },
      { path: 'cells[3]', message: 'must be an object, not a number' },
    ])
  })

  it('answers 400 naming duplicate names even when other cells have problems too, in cell order', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, {
      format: 'penumbra.sheet', version: 1, title: 'Two of a name',
      cells: [
        { id: 'p1', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
        { kind: 'formula', name: 'alpha' },
        { id: 'p1', kind: 'parameter', name: 'Eg', value: 1.5 },
        { kind: 'hologram', name: 'alpha' },
      ],
    })
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([
      { path: 'cells[1].source', message: 'required' },
      { path: 'cells[2].name', message: 'duplicate name "Eg" (also cells[0])' },
      { path: 'cells[2].id', message: 'duplicate id "p1" (also cells[0])' },
      { path: 'cells[3].kind', message: 'unknown cell kind; expected one of parameter, formula, spectrum, fit, sweep, figure, note, stack' },
      { path: 'cells[3].name', message: 'duplicate name "alpha" (also cells[1])' },
    ])
  })

  it('answers 400 for an uploaded file that is not JSON, and for a wrong format or version', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const notJson = await request(t.app)
      .post(`/api/labs/${lab.labId}/sheets`)
      .set('Cookie', lab.users.owner.cookie)
      .set(CSRF_HEADER, '1')
      .attach('file', Buffer.from('{ "format": "penumbra.sheet", '), { filename: 'cut.penumbra.json' })
    expect(notJson.status).toBe(400)
    expect(notJson.body.issues[0].path).toBe('')
    expect(notJson.body.issues[0].message).toMatch(/^not valid JSON/)
    const wrong = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, { format: 'other', version: 2, title: '', cells: {} })
    expect(wrong.status).toBe(400)
    expect(wrong.body.issues.map((i: { path: string }) => i.path)).toEqual(['format', 'version', 'title', 'cells'])
  })

  it('answers 400 for a malformed JSON body and 413 for one over the limit', async () => {
    const t = await makeTestApp({ config: { maxBodyBytes: 2048 } })
    const lab = await seedLab(t)
    const malformed = await request(t.app).post(`/api/labs/${lab.labId}/sheets`).set('Cookie', lab.users.owner.cookie).set('Content-Type', 'application/json').send('{"title": ')
    expect(malformed.status).toBe(400)
    expect(malformed.body.error).toBe('The request body is not valid JSON.')
    const big = { ...FILE, cells: [{ kind: 'note', text: 'x'.repeat(5000) }] }
    const tooLarge = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, big)
    expect(tooLarge.status).toBe(413)
    const upload = await request(t.app)
      .post(`/api/labs/${lab.labId}/sheets`)
      .set('Cookie', lab.users.owner.cookie)
      .set(CSRF_HEADER, '1')
      .attach('file', Buffer.from(JSON.stringify(big)), { filename: 'big.penumbra.json' })
    expect(upload.status).toBe(413)
    expect(upload.body.error).toMatch(/larger than/)
  })
})

describe('GET /api/sheets/:sheetId/file', () => {
  it('exports the sheet file as a download that imports back to the same cells', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const created = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, FILE)
    await call(t, lab.users.owner.cookie).patch(`/api/sheets/${created.body.id}`, { title: 'Film B: edge/model' })
    const res = await call(t, lab.users.viewer.cookie).get(`/api/sheets/${created.body.id}/file`)
    expect(res.status).toBe(200)
    expect(res.headers['content-type']).toBe('application/vnd.penumbra.sheet+json; charset=utf-8')
    expect(res.headers['content-disposition']).toBe(`attachment; filename="Film B: edge model.penumbra.json"; filename*=UTF-8''Film%20B%3A%20edge%20model.penumbra.json`)
    const exported = JSON.parse(res.text)
    expect(exported.title).toBe('Film B: edge/model')
    const ids = exported.cells.map((c: { id: string }) => c.id)
    expect(exported.cells).toEqual(FILE.cells.map((c, i) => ({ ...c, id: ids[i] })))
    // and back in: the same cells, ids included
    const again = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, exported)
    expect(again.status).toBe(201)
    expect((await loadSheetFile(t.db, again.body.id)).cells).toEqual(exported.cells)
  })

  it('names the download <title>.penumbra.json, with an ASCII fallback and the exact title in UTF-8', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const cases: [string, string][] = [
      ['Film H-17 (annealed): band-edge model', `attachment; filename="Film H-17 (annealed): band-edge model.penumbra.json"; filename*=UTF-8''Film%20H-17%20%28annealed%29%3A%20band-edge%20model.penumbra.json`],
      ["Tomás's \"best\" film", `attachment; filename="Tom_s's 'best' film.penumbra.json"; filename*=UTF-8''Tom%C3%A1s%27s%20%22best%22%20film.penumbra.json`],
    ]
    for (const [title, header] of cases) {
      const created = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, { title })
      const res = await call(t, lab.users.editor.cookie).get(`/api/sheets/${created.body.id}/file`)
      expect(res.headers['content-disposition']).toBe(header)
      expect(JSON.parse(res.text).title).toBe(title)
    }
  })

  it('exports the demo example unchanged apart from ids', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const source = JSON.parse(readFileSync(EXAMPLE, 'utf8'))
    const created = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/sheets`, source)
    const exported = JSON.parse((await call(t, lab.users.owner.cookie).get(`/api/sheets/${created.body.id}/file`)).text)
    expect(exported.cells.map((c: { id?: string }) => ({ ...c, id: undefined }))).toEqual(source.cells.map((c: { id?: string }) => ({ ...c, id: undefined })))
  })
})

describe('PATCH /api/sheets/:sheetId and DELETE /api/sheets/:sheetId', () => {
  it('renames, with 400 naming the field for an empty title', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.editor.cookie).patch(`/api/sheets/${lab.ownerSheetId}`, { title: 'Renamed' })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ title: 'Renamed', canDelete: false, role: 'editor' })
    const bad = await call(t, lab.users.editor.cookie).patch(`/api/sheets/${lab.ownerSheetId}`, { title: '' })
    expect(bad.body.issues).toEqual([{ path: 'title', message: 'must not be empty' }])
  })

  it('deletes the sheet and its document, and tells the live layer', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const forbidden = await call(t, lab.users.editor.cookie).del(`/api/sheets/${lab.ownerSheetId}`)
    expect(forbidden.body.error).toBe('Editors may delete only the sheets they made.')
    expect((await call(t, lab.users.editor.cookie).del(`/api/sheets/${lab.editorSheetId}`)).status).toBe(204)
    expect(t.hookCalls).toEqual([{ hook: 'sheetDeleted', args: [lab.editorSheetId] }])
    expect((await call(t, lab.users.owner.cookie).get(`/api/sheets/${lab.editorSheetId}`)).status).toBe(404)
    expect(await t.db.select().from(sheetStates).where(eq(sheetStates.sheetId, lab.editorSheetId))).toEqual([])
  })
})

describe('POST /api/evaluate', () => {
  it('answers the engine’s result object, one result per cell in order', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.viewer.cookie).post('/api/evaluate', FILE)
    expect(res.status).toBe(200)
    expect(res.body.title).toBe('Edge model of film B')
    expect(res.body.cells.map((c: { index: number; kind: string }) => [c.index, c.kind])).toEqual([[0, 'parameter'], [1, 'formula'], [2, 'note']])
    for (const c of res.body.cells) expect(['ok', 'error', 'blocked']).toContain(c.status)
  })

  it('answers 400 with issues for an invalid sheet file', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.viewer.cookie).post('/api/evaluate', { format: 'penumbra.sheet', version: 1, title: 'x', cells: [{ kind: 'parameter', name: 'a' }] })
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([{ path: 'cells[0].value', message: 'required' }])
  })
})

describe('GET /api/labs/:labId/sheets', () => {
  it('orders by the last change, including live document updates stored by the collaboration layer', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const later = Date.now() + 60_000
    // the sheet's first stored update (its state covers none yet), as the collaboration layer appends it
    await t.db.insert(sheetUpdates).values({ sheetId: lab.editorSheetId, seq: 1, update: Buffer.from([0, 0]), userId: lab.users.editor.id, createdAt: later })
    const list = (await call(t, lab.users.viewer.cookie).get(`/api/labs/${lab.labId}/sheets`)).body.sheets
    expect(list.map((s: { id: string }) => s.id)).toEqual([lab.editorSheetId, lab.ownerSheetId])
    expect(list[0].updatedAt).toBe(later)
    expect((await call(t, lab.users.viewer.cookie).get(`/api/sheets/${lab.editorSheetId}`)).body.updatedAt).toBe(later)
  })
})
