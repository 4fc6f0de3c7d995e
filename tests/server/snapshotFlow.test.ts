/**
 * Snapshots, reviews, comments and guest links over the API: compare, immutability, delete rules, CSV, restore,
 * what a guest link shows (and does not), expiry and revocation, review states and their mails, comments with
 * mentions and the live event stream.
 */
import { afterAll, describe, expect, it } from 'vitest'
import http from 'node:http'
import type { AddressInfo } from 'node:net'
import { eq } from 'drizzle-orm'
import { call, makeTestApp, seedLab, type SeededLab, type TestApp } from '../utils/server'
import { createSheet } from '../../server/services/sheets'
import { seedDocument, loadSheetFile } from '../../server/services/documents'
import { createGuestLink } from '../../server/services/guestLinks'
import { closeSharedEvaluator } from '../../server/services/evaluation'
import { snapshotById } from '../../server/services/snapshots'
import { datasets, snapshots } from '../../server/db/tables'
import { SESSION_COOKIE } from '../../server/services/sessions'
import { commentSchema, compareReply, guestSnapshotReply, reviewQueueReply, reviewSchema } from '../../shared/schema/api'
import type { SheetFile } from '../../shared/schema/sheet'
import { canonicalJson } from '../../shared/snapshot/canonical'

afterAll(() => closeSharedEvaluator())

const FILE: SheetFile = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Film B edge',
  cells: [
    { id: 'p-Eg', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
    { id: 'f-E', kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 61)', unit: 'eV' },
    { id: 'f-lam', kind: 'formula', name: 'lambda_g', source: 'photon_wavelength(Eg)', unit: 'nm' },
    { id: 'n-1', kind: 'note', text: 'After the 450 °C anneal.' },
  ],
}

async function setup(): Promise<{ t: TestApp; lab: SeededLab; sheetId: string; freeze: (who: 'editor' | 'owner', message: string) => Promise<string>; edit: (f: (cells: Record<string, unknown>[]) => void) => Promise<void> }> {
  const t = await makeTestApp()
  const lab = await seedLab(t)
  const sheetId = (await createSheet(t.deps, lab.labId, lab.users.editor.id, FILE)).id
  const freeze = async (who: 'editor' | 'owner', message: string) => {
    const res = await call(t, lab.users[who].cookie).post(`/api/sheets/${sheetId}/snapshots`, { message })
    if (res.status !== 201) throw new Error(`freeze: ${res.status} ${JSON.stringify(res.body)}`)
    return res.body.id as string
  }
  const edit = async (f: (cells: Record<string, unknown>[]) => void) => {
    const file = (await loadSheetFile(t.db, sheetId)) as SheetFile & { cells: Record<string, unknown>[] }
    f(file.cells)
    await seedDocument(t.db, sheetId, file as SheetFile)
  }
  return { t, lab, sheetId, freeze, edit }
}

describe('GET /api/snapshots/:a/compare/:b', () => {
  it('lists the changed parameter and the results that moved between two snapshots, and against the live sheet', async () => {
    const { t, lab, freeze, edit } = await setup()
    const a = await freeze('editor', 'before')
    await edit((cells) => {
      cells.find((c) => c.name === 'Eg')!.value = 1.52
    })
    const b = await freeze('editor', 'after')
    const res = await call(t, lab.users.reviewer.cookie).get(`/api/snapshots/${a}/compare/${b}`)
    expect(res.status).toBe(200)
    const diff = compareReply.parse(res.body)
    expect(diff.parameters).toEqual([{ name: 'Eg', before: 1.48, after: 1.52, unit: 'eV' }])
    expect([diff.formulas, diff.settings, diff.added, diff.removed, diff.renamed, diff.moved]).toEqual([[], [], [], [], [], []])
    expect(diff.results.map((r) => r.name)).toEqual(['Eg', 'lambda_g'])
    // λg = hc/Eg, so the relative change is 1.48/1.52 − 1 (exact up to rounding)
    expect(diff.results[1].change).toBeCloseTo(1.48 / 1.52 - 1, 12)
    await edit((cells) => {
      cells.push({ id: 'f-new', kind: 'formula', name: 'depth', source: '1/(1e4/cm)', unit: 'um' })
    })
    const live = compareReply.parse((await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${b}/compare/live`)).body)
    expect(live.b.id).toBe('live')
    expect(live.added).toEqual(['depth'])
    expect(live.parameters).toEqual([])
    expect(live.results).toEqual([])
    await t.close()
  })

  it('answers 404 for a snapshot of a lab the caller is not in', async () => {
    const { t, lab, freeze } = await setup()
    const a = await freeze('editor', 'mine')
    const other = await seedLab(t, 'Other Lab')
    const otherSheet = (await createSheet(t.deps, other.labId, other.users.editor.id, FILE)).id
    const made = await call(t, other.users.editor.cookie).post(`/api/sheets/${otherSheet}/snapshots`, { message: 'theirs' })
    const res = await call(t, lab.users.owner.cookie).get(`/api/snapshots/${a}/compare/${made.body.id}`)
    expect(res.status).toBe(404)
    await t.close()
  })
})

describe('snapshot immutability', () => {
  it('no route changes a snapshot: there is no update path, and reviews, comments, links, restore and live edits leave its row as it was', async () => {
    const { t, lab, sheetId, freeze, edit } = await setup()
    const id = await freeze('editor', 'frozen')
    const row = async () => (await t.db.select().from(snapshots).where(eq(snapshots.id, id)))[0]
    const before = await row()
    const owner = call(t, lab.users.owner.cookie)
    for (const res of [await owner.patch(`/api/snapshots/${id}`, { message: 'changed' }), await owner.post(`/api/snapshots/${id}`, { message: 'changed' })]) expect(res.status).toBe(404)
    expect((await owner.post(`/api/snapshots/${id}/reviews`, { reviewerIds: [lab.users.reviewer.id], note: 'n' })).status).toBe(201)
    expect((await owner.post(`/api/sheets/${sheetId}/comments`, { cellId: 'f-lam', text: 'hm', snapshotId: id })).status).toBe(201)
    expect((await owner.post(`/api/snapshots/${id}/guest-links`, { expiresInDays: 3, note: '' })).status).toBe(201)
    expect((await owner.post(`/api/snapshots/${id}/restore`, { into: 'new' })).status).toBe(201)
    await edit((cells) => {
      cells.find((c) => c.name === 'Eg')!.value = 1.6
    })
    await freeze('owner', 'later')
    expect(await row()).toEqual(before)
    await t.close()
  })
})

describe('DELETE /api/snapshots/:snapshotId', () => {
  it('refuses (409) while a usable guest link shows it, and deletes it once the link is revoked', async () => {
    const { t, lab, freeze } = await setup()
    const id = await freeze('editor', 'to share')
    const link = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${id}/guest-links`, { expiresInDays: 2 })
    const owner = call(t, lab.users.owner.cookie)
    const refused = await owner.del(`/api/snapshots/${id}`)
    expect(refused.status).toBe(409)
    expect(refused.body.error).toBe('A guest link still shows this snapshot. Revoke it first, then delete the snapshot.')
    expect((await owner.del(`/api/guest-links/${link.body.id}`)).status).toBe(204)
    expect((await owner.del(`/api/snapshots/${id}`)).status).toBe(204)
    expect(await snapshotById(t.db, id)).toBeUndefined()
    await t.close()
  })
})

describe('GET /api/snapshots/:snapshotId/cells/:cellId/csv', () => {
  it('downloads a formula array as one column with its unit, and answers 422 for a cell without a series', async () => {
    const { t, lab, freeze } = await setup()
    const id = await freeze('editor', 'csv')
    const res = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${id}/cells/f-E/csv`)
    expect(res.status).toBe(200)
    expect(res.headers['content-type']).toMatch(/^text\/csv/)
    expect(res.headers['content-disposition']).toContain('Film B edge - E.csv')
    const lines = res.text.trim().split('\r\n')
    expect(lines[0]).toBe('E (eV)')
    expect(lines).toHaveLength(62)
    expect(Number(lines[1])).toBeCloseTo(1.2, 12)
    expect(Number(lines[61])).toBeCloseTo(2.4, 12)
    const none = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${id}/cells/n-1/csv`)
    expect(none.status).toBe(422)
    expect((await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${id}/cells/no-such-cell/csv`)).status).toBe(404)
    await t.close()
  })
})

describe('a spectrum’s columns in a snapshot', () => {
  it('keep the order the sheet showed (not the stored file’s sorted one) on the page, for a guest, in both CSVs and in a restored sheet; the export stays canonical', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const spectrum = {
      id: 's-film', kind: 'spectrum' as const, name: 'filmB', source: 'film-B_TR.csv',
      columns: {
        wavelength: { unit: 'nm', quantity: 'wavelength', values: [700, 800, 900] },
        T: { unit: '%', quantity: 'T', values: [12.5, 40.25, 61] },
        R: { unit: '%', quantity: 'R', values: [22, 21.5, 21] },
      },
    }
    const sheetId = (await createSheet(t.deps, lab.labId, lab.users.editor.id, { ...FILE, cells: [...FILE.cells, spectrum] })).id
    const live = await call(t, lab.users.viewer.cookie).get(`/api/sheets/${sheetId}/cells/s-film/csv`)
    expect(live.text.split('\r\n')[0]).toBe('filmB.wavelength (nm),filmB.T (%),filmB.R (%)')
    const snap = (await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheetId}/snapshots`, { message: 'order' })).body.id as string
    const order = ['wavelength', 'T', 'R']
    const columnsOf = (body: { file: { cells: unknown[] }; results: { cells: { id?: string; value: unknown }[] } }) => [
      Object.keys((body.file.cells.find((c) => (c as { id: string }).id === 's-film') as { columns: object }).columns),
      Object.keys((body.results.cells.find((c) => c.id === 's-film')!.value as { columns: object }).columns),
    ]
    // the stored text sorts keys for its hash (R, T, wavelength); what people see follows the sheet
    const row = (await snapshotById(t.db, snap))!
    expect(Object.keys((JSON.parse(row.file).cells as { id: string; columns?: object }[]).find((c) => c.id === 's-film')!.columns!)).toEqual(['R', 'T', 'wavelength'])
    const detail = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${snap}`)
    expect(columnsOf(detail.body)).toEqual([order, order])
    const csv = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${snap}/cells/s-film/csv`)
    expect(csv.text).toBe(live.text)
    const token = (await call(t, lab.users.owner.cookie).post(`/api/snapshots/${snap}/guest-links`, { expiresInDays: 1 })).body.url.split('/').pop()
    expect(columnsOf((await call(t).get(`/api/guest/${token}`)).body)).toEqual([order, order])
    expect((await call(t).get(`/api/guest/${token}/cells/s-film/csv`)).text).toBe(live.text)
    const restored = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${snap}/restore`, { into: 'new' })
    const back = await loadSheetFile(t.db, restored.body.id)
    expect(Object.keys((back.cells.find((c) => c.kind === 'spectrum') as { columns: object }).columns)).toEqual(order)
    // the exported file is the stored canonical text plus its snapshot member: its hash still checks
    const exported = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${snap}/file`)
    const { snapshot: member, ...file } = JSON.parse(exported.text) as { snapshot: { hash: string } }
    expect(canonicalJson(file)).toBe(row.file)
    expect(member.hash).toBe(row.hash)
    await t.close()
  })
})

describe('POST /api/snapshots/:snapshotId/restore', () => {
  it('makes a new sheet in the lab from the snapshot, its cells as they were frozen', async () => {
    const { t, lab, freeze, edit } = await setup()
    const id = await freeze('editor', 'good state')
    await edit((cells) => {
      cells.find((c) => c.name === 'Eg')!.value = 1.9
    })
    const res = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${id}/restore`, { into: 'new', title: 'Film B edge, as approved' })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ title: 'Film B edge, as approved', labId: lab.labId })
    const restored = await loadSheetFile(t.db, res.body.id)
    expect(restored.cells.find((c) => c.kind === 'parameter')).toMatchObject({ name: 'Eg', value: 1.48 })
    await t.close()
  })
})

describe('GET /api/guest/:token', () => {
  it('shows that one snapshot with its author’s name only, counts the view, and sends noindex and no referrer', async () => {
    const { t, lab, sheetId, freeze } = await setup()
    const a = await freeze('editor', 'for the referee')
    const b = await freeze('owner', 'not shared')
    const made = await call(t, lab.users.owner.cookie).post(`/api/snapshots/${a}/guest-links`, { expiresInDays: 14, note: 'Referee copy' })
    expect(made.status).toBe(201)
    expect(made.body.url).toMatch(/^http:\/\/penumbra\.test\/guest\/[A-Za-z0-9_-]{43}$/)
    const token = made.body.url.split('/').pop()
    const res = await call(t).get(`/api/guest/${token}`)
    expect(res.status).toBe(200)
    expect(res.headers['x-robots-tag']).toContain('noindex')
    expect(res.headers['referrer-policy']).toBe('no-referrer')
    const shown = guestSnapshotReply.parse(res.body)
    expect(shown).toMatchObject({ title: 'Film B edge', message: 'for the referee', authorName: 'The editor', note: 'Referee copy' })
    const text = JSON.stringify(res.body)
    for (const secret of [lab.labId, lab.labName, sheetId, a, b, 'The owner', 'The reviewer', 'The viewer', lab.users.editor.email, lab.users.editor.id]) expect(text).not.toContain(secret)
    const snapshotB = (await call(t, lab.users.owner.cookie).get(`/api/snapshots/${b}`)).body
    expect(shown.hash).not.toBe(undefined)
    expect(text.includes(snapshotB.id)).toBe(false)
    // the token is no session: snapshot B, the lab, its sheets and its datasets stay closed
    for (const path of [`/api/snapshots/${b}`, `/api/snapshots/${a}`, `/api/labs/${lab.labId}`, `/api/labs/${lab.labId}/sheets`, `/api/sheets/${sheetId}/file`])
      expect((await call(t).get(path).set('Authorization', `Bearer ${token}`)).status).toBe(401)
    await t.close()
  })

  it('a guest link to one snapshot of a sheet with a stored spectrum cannot read that dataset', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const { readFileSync } = await import('node:fs')
    const { parseSheetFileText } = await import('../../shared/schema/sheet')
    const parsed = parseSheetFileText(readFileSync(new URL('../../examples/edge-model.penumbra.json', import.meta.url), 'utf8'))
    if (!parsed.ok) throw new Error('example')
    const sheetId = (await createSheet(t.deps, lab.labId, lab.users.editor.id, parsed.value)).id
    const snap = await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheetId}/snapshots`, { message: 'x' })
    const link = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${snap.body.id}/guest-links`, { expiresInDays: 1 })
    const token = link.body.url.split('/').pop()
    const shown = (await call(t).get(`/api/guest/${token}`)).body
    // the guest's file carries the numbers inline and no dataset id; the stored dataset is still behind the lab's roles
    expect(shown.file.cells.find((c: { name?: string }) => c.name === 'filmH17').datasetId).toBeUndefined()
    const [{ id: datasetId }] = await t.db.select({ id: datasets.id }).from(datasets).limit(1)
    expect((await call(t).get(`/api/datasets/${datasetId}`).set('Authorization', `Bearer ${token}`)).status).toBe(401)
    expect((await call(t, lab.users.viewer.cookie).get(`/api/datasets/${datasetId}`)).status).toBe(200)
    await t.close()
  })

  it('counts each view of a guest link', async () => {
    const { t, lab, freeze } = await setup()
    const a = await freeze('editor', 'for the referee')
    const made = await call(t, lab.users.owner.cookie).post(`/api/snapshots/${a}/guest-links`, { expiresInDays: 14, note: 'Referee copy' })
    const token = made.body.url.split('/').pop()
    await call(t).get(`/api/guest/${token}`)
    const list = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${a}/guest-links`)
    expect(list.body.links[0]).toMatchObject({ viewCount: 1, state: 'active', note: 'Referee copy' })
    expect(list.body.links[0].lastViewAt).toBeGreaterThan(0)
    expect(list.body.links[0]).not.toHaveProperty('url')
    const page = await call(t).get(`/guest/${token}`)
    expect(page.headers['x-robots-tag']).toContain('noindex')
    expect(page.headers['referrer-policy']).toBe('no-referrer')
    await t.close()
  })

  it('answers 410 with a plain sentence for an expired link and for a revoked one', async () => {
    const { t, lab, freeze } = await setup()
    const id = await freeze('editor', 'shared')
    const snap = (await snapshotById(t.db, id))!
    const expired = await createGuestLink(t.deps, snap, lab.users.owner.id, { expiresInDays: 1, note: '', now: Date.now() - 2 * 86_400_000 })
    const res = await call(t).get(`/api/guest/${expired.url.split('/').pop()}`)
    expect(res.status).toBe(410)
    expect(res.body.error).toMatch(/^This guest link expired on .+\. Ask the lab that shared it for a new one\.$/)
    const live = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${id}/guest-links`, { expiresInDays: 90 })
    const token = live.body.url.split('/').pop()
    expect((await call(t).get(`/api/guest/${token}`)).status).toBe(200)
    expect((await call(t, lab.users.editor.cookie).del(`/api/guest-links/${live.body.id}`)).status).toBe(204)
    const revoked = await call(t).get(`/api/guest/${token}`)
    expect(revoked.status).toBe(410)
    expect(revoked.body.error).toBe('This guest link was revoked by the lab that shared it. Ask them for a new one.')
    await t.close()
  })

  it('GET /api/guest/:token/cells/:cellId/csv writes a cell of that snapshot only, counts no view, and answers 410 once the link is expired or revoked', async () => {
    const { t, lab, freeze, edit } = await setup()
    const a = await freeze('editor', 'shared')
    await edit((cells) => {
      cells.push({ id: 'f-later', kind: 'formula', name: 'later', source: 'grid(1*eV, 2*eV, 5)', unit: 'eV' })
    })
    const b = await freeze('editor', 'not shared')
    const made = await call(t, lab.users.owner.cookie).post(`/api/snapshots/${a}/guest-links`, { expiresInDays: 7 })
    const token = made.body.url.split('/').pop()
    const res = await call(t).get(`/api/guest/${token}/cells/f-E/csv`)
    expect(res.status).toBe(200)
    expect(res.headers['content-type']).toMatch(/^text\/csv/)
    expect(res.headers['x-robots-tag']).toContain('noindex')
    expect(res.headers['referrer-policy']).toBe('no-referrer')
    // the same file as the members' download of that snapshot's cell
    expect(res.text).toBe((await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${a}/cells/f-E/csv`)).text)
    // a cell that exists only in snapshot B (and the live sheet) is not in what the link shows
    expect((await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${b}/cells/f-later/csv`)).status).toBe(200)
    expect((await call(t).get(`/api/guest/${token}/cells/f-later/csv`)).status).toBe(404)
    // downloads are not page views
    expect((await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${a}/guest-links`)).body.links[0].viewCount).toBe(0)
    const expired = await createGuestLink(t.deps, (await snapshotById(t.db, a))!, lab.users.owner.id, { expiresInDays: 1, note: '', now: Date.now() - 2 * 86_400_000 })
    const old = await call(t).get(`/api/guest/${expired.url.split('/').pop()}/cells/f-E/csv`)
    expect(old.status).toBe(410)
    expect(old.body.error).toMatch(/^This guest link expired on /)
    expect((await call(t, lab.users.owner.cookie).del(`/api/guest-links/${made.body.id}`)).status).toBe(204)
    const revoked = await call(t).get(`/api/guest/${token}/cells/f-E/csv`)
    expect(revoked.status).toBe(410)
    expect(revoked.body.error).toBe('This guest link was revoked by the lab that shared it. Ask them for a new one.')
    await t.close()
  })

  it('refuses an expiry outside 1 to 90 days with 400 naming the field', async () => {
    const { t, lab, freeze } = await setup()
    const id = await freeze('editor', 'shared')
    for (const days of [0, 91, 2.5]) {
      const res = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${id}/guest-links`, { expiresInDays: days })
      expect(res.status).toBe(400)
      expect(res.body.issues[0].path).toBe('expiresInDays')
    }
    await t.close()
  })
})

describe('reviews', () => {
  it('POST …/reviews mails each reviewer; decisions set the state and mail the requester; the queue sorts them', async () => {
    const { t, lab, freeze } = await setup()
    const id = await freeze('editor', 'after the anneal')
    const asked = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${id}/reviews`, { reviewerIds: [lab.users.reviewer.id, lab.users.owner.id], note: 'Is the Tauc window right?' })
    expect(asked.status).toBe(201)
    const review = reviewSchema.parse(asked.body)
    expect(review.state).toBe('open')
    for (const who of ['reviewer', 'owner'] as const) {
      const mails = t.mailer.to(lab.users[who].email)
      expect(mails).toHaveLength(1)
      expect(mails[0].subject).toBe(`The editor asks you to review "Film B edge" (${review.snapshotHash.slice(0, 10)})`)
      expect(mails[0].text).toContain('Is the Tauc window right?')
      expect(mails[0].links[0]).toBe(`http://penumbra.test/snapshots/${id}`)
    }
    const waiting = reviewQueueReply.parse((await call(t, lab.users.reviewer.cookie).get(`/api/labs/${lab.labId}/reviews`)).body)
    expect(waiting.waiting.map((r) => r.id)).toEqual([review.id])
    const sendBack = await call(t, lab.users.reviewer.cookie).patch(`/api/reviews/${review.id}`, { decision: 'changes-requested', note: 'Narrow the window.' })
    expect(sendBack.body.state).toBe('changes-requested')
    const toEditor = t.mailer.to(lab.users.editor.email)
    expect(toEditor.at(-1)!.subject).toBe(`The reviewer asked for changes to "Film B edge" (${review.snapshotHash.slice(0, 10)})`)
    expect(toEditor.at(-1)!.text).toContain('Narrow the window.')
    expect((await call(t, lab.users.owner.cookie).patch(`/api/reviews/${review.id}`, { decision: 'approved', note: '' })).body.state).toBe('changes-requested')
    const approved = await call(t, lab.users.reviewer.cookie).patch(`/api/reviews/${review.id}`, { decision: 'approved', note: 'Good now.' })
    expect(approved.body.state).toBe('approved')
    expect(approved.body.decisions.map((d: { decision: string }) => d.decision)).toEqual(['approved', 'approved'])
    const queue = reviewQueueReply.parse((await call(t, lab.users.reviewer.cookie).get(`/api/labs/${lab.labId}/reviews`)).body)
    expect(queue.waiting).toEqual([])
    expect(queue.decided.map((r) => r.id)).toEqual([review.id])
    const mine = reviewQueueReply.parse((await call(t, lab.users.editor.cookie).get(`/api/labs/${lab.labId}/reviews`)).body)
    expect(mine.requested.map((r) => r.id)).toEqual([review.id])
    const timeline = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${id}`)
    expect(timeline.body.reviewState).toBe('approved')
    await t.close()
  })

  it('a decision does not carry over to a newer snapshot of the same sheet', async () => {
    const { t, lab, sheetId, freeze, edit } = await setup()
    const a = await freeze('editor', 'first')
    const r = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${a}/reviews`, { reviewerIds: [lab.users.reviewer.id] })
    await call(t, lab.users.reviewer.cookie).patch(`/api/reviews/${r.body.id}`, { decision: 'approved', note: 'ok' })
    await edit((cells) => {
      cells.find((c) => c.name === 'Eg')!.value = 1.5
    })
    const b = await freeze('editor', 'edited after approval')
    const list = (await call(t, lab.users.viewer.cookie).get(`/api/sheets/${sheetId}/snapshots`)).body.snapshots
    expect(list.map((s: { id: string; reviewState: string | null }) => [s.id, s.reviewState])).toEqual([[b, null], [a, 'approved']])
    const asked = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${b}/reviews`, { reviewerIds: [lab.users.reviewer.id] })
    expect(asked.body.state).toBe('open')
    expect(asked.body.decisions).toEqual([expect.objectContaining({ reviewerId: lab.users.reviewer.id, decision: null })])
    await t.close()
  })

  it('refuses to ask an editor or a viewer (400 naming the entry), and answers 403 for someone not asked', async () => {
    const { t, lab, freeze } = await setup()
    const id = await freeze('editor', 'x')
    const bad = await call(t, lab.users.owner.cookie).post(`/api/snapshots/${id}/reviews`, { reviewerIds: [lab.users.reviewer.id, lab.users.viewer.id] })
    expect(bad.status).toBe(400)
    expect(bad.body.issues).toEqual([{ path: 'reviewerIds[1]', message: 'is a viewer; only reviewers and owners review' }])
    const r = await call(t, lab.users.editor.cookie).post(`/api/snapshots/${id}/reviews`, { reviewerIds: [lab.users.reviewer.id] })
    const notAsked = await call(t, lab.users.owner.cookie).patch(`/api/reviews/${r.body.id}`, { decision: 'approved' })
    expect(notAsked.status).toBe(403)
    expect(notAsked.body.error).toBe('You were not asked to review this snapshot.')
    await t.close()
  })
})

describe('comments', () => {
  it('POST …/comments threads replies, says which snapshot a comment is on, resolves and reopens, and mails an @mention', async () => {
    const { t, lab, sheetId, freeze } = await setup()
    const snap = await freeze('editor', 'x')
    const first = await call(t, lab.users.reviewer.cookie).post(`/api/sheets/${sheetId}/comments`, { cellId: 'f-lam', text: '@viewer, is this the 450 °C film?', snapshotId: snap })
    expect(first.status).toBe(201)
    const c = commentSchema.parse(first.body)
    expect(c).toMatchObject({ snapshotId: snap, parentId: null, resolved: false, authorName: 'The reviewer' })
    expect(c.snapshotHash).toMatch(/^[0-9a-f]{64}$/)
    const mail = t.mailer.to(lab.users.viewer.email)
    expect(mail).toHaveLength(1)
    expect(mail[0].subject).toBe('The reviewer mentioned you on "Film B edge"')
    expect(mail[0].text).toContain('the cell lambda_g')
    const reply = await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheetId}/comments`, { cellId: 'ignored', text: 'Yes.', parentId: c.id })
    expect(reply.body).toMatchObject({ parentId: c.id, cellId: 'f-lam', snapshotId: snap })
    const resolved = await call(t, lab.users.editor.cookie).patch(`/api/comments/${reply.body.id}`, { resolved: true })
    expect(resolved.body).toMatchObject({ id: c.id, resolved: true })
    const reopened = await call(t, lab.users.reviewer.cookie).patch(`/api/comments/${c.id}`, { resolved: false })
    expect(reopened.body.resolved).toBe(false)
    const live = await call(t, lab.users.owner.cookie).post(`/api/sheets/${sheetId}/comments`, { cellId: 'p-Eg', text: 'Live remark' })
    expect(live.body.snapshotId).toBeNull()
    const all = (await call(t, lab.users.viewer.cookie).get(`/api/sheets/${sheetId}/comments`)).body.comments
    expect(all.map((x: { text: string }) => x.text)).toEqual(['@viewer, is this the 450 °C film?', 'Yes.', 'Live remark'])
    expect((await call(t, lab.users.viewer.cookie).get(`/api/sheets/${sheetId}/comments?snapshotId=live`)).body.comments).toHaveLength(1)
    expect((await call(t, lab.users.viewer.cookie).get(`/api/sheets/${sheetId}/comments?snapshotId=${snap}`)).body.comments).toHaveLength(2)
    const wrongCell = await call(t, lab.users.owner.cookie).post(`/api/sheets/${sheetId}/comments`, { cellId: 'no-such-cell', text: 'x', snapshotId: snap })
    expect(wrongCell.status).toBe(400)
    await t.close()
  })

  it('GET …/comments/events streams each new comment to the others on the sheet', async () => {
    const { t, lab, sheetId } = await setup()
    const server = http.createServer(t.app)
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve))
    const { port } = server.address() as AddressInfo
    const received: string[] = []
    const req = http.get({ host: '127.0.0.1', port, path: `/api/sheets/${sheetId}/comments/events`, headers: { Cookie: lab.users.viewer.cookie } })
    const response = await new Promise<http.IncomingMessage>((resolve) => req.on('response', resolve))
    expect(response.statusCode).toBe(200)
    expect(response.headers['content-type']).toMatch(/^text\/event-stream/)
    response.setEncoding('utf8')
    response.on('data', (chunk: string) => received.push(chunk))
    await call(t, lab.users.reviewer.cookie).post(`/api/sheets/${sheetId}/comments`, { cellId: 'p-Eg', text: 'Seen live?' })
    const deadline = Date.now() + 5000
    while (!received.join('').includes('Seen live?') && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20))
    const event = received.join('').split('\n\n').find((e) => e.startsWith('event: comment'))!
    expect(commentSchema.parse(JSON.parse(event.split('\ndata: ')[1])).text).toBe('Seen live?')
    req.destroy()
    await new Promise<void>((resolve) => server.close(() => resolve()))
    await t.close()
  })

  it('GET …/comments/events answers 401 without a session', async () => {
    const { t, sheetId } = await setup()
    const res = await call(t).get(`/api/sheets/${sheetId}/comments/events`)
    expect(res.status).toBe(401)
    void SESSION_COOKIE
    await t.close()
  })
})
