// The REST app and the collaboration server over one database, wired as server/index.ts wires them: deleting a sheet,
// changing a member's role, removing a member and signing out reach open websockets; the exported file of a sheet
// being edited live, evaluated by POST /api/evaluate, gives the results each client computes from its own copy.
import { afterAll, beforeEach, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { users } from '../../server/db/tables'
import request from 'supertest'
import type { Express } from 'express'
import * as Y from 'yjs'
import { createApp } from '../../server/app'
import { defaultConfig } from '../../server/config'
import { closeSharedEvaluator } from '../../server/services/evaluation'
import { SESSION_COOKIE } from '../../server/services/sessions'
import { CLOSE } from '../../server/collab/index'
import { CSRF_HEADER } from '../../shared/schema/api'
import { cellsOf, docToSheetFile } from '../../shared/doc/sheetDoc'
import { evaluateSheet } from '../../shared/engine/index'
import { fakeMailer } from '../utils/server'
import { SECRET, storedRows, until, upgradeStatus, type Person } from './support/fixture'
import { useCollab } from './support/useCollab'

function formula(doc: Y.Doc): Y.Text {
  const cell = cellsOf(doc)
    .toArray()
    .find((m) => m.get('name') === 'x')
  if (!cell) throw new Error('no cell x')
  return cell.get('source') as Y.Text
}

describe('collab with the REST app', () => {
  const t = useCollab({ start: false })
  let app: Express

  beforeEach(async () => {
    const server = await t.start({ recheckMs: 40, sweepMs: 10 })
    const limits = { windowMs: 60_000, limit: 10_000 }
    app = createApp({
      db: t.lab.handle.db,
      secret: SECRET,
      mailer: fakeMailer(),
      config: defaultConfig({ publicUrl: 'http://penumbra.test', limits: { signIn: limits, mail: limits, token: limits } }),
      hooks: {
        membershipChanged: (labId, userId) => server.collab.membershipChanged(labId, userId),
        sheetDeleted: (sheetId) => server.collab.sheetDeleted(sheetId),
      },
    })
  })
  afterAll(() => closeSharedEvaluator())

  const as = (person: Person) => {
    const cookie = `${SESSION_COOKIE}=${t.lab.tokens[person]}`
    return {
      get: (path: string) => request(app).get(path).set('Cookie', cookie),
      post: (path: string) => request(app).post(path).set('Cookie', cookie).set(CSRF_HEADER, '1'),
      patch: (path: string, body: object) => request(app).patch(path).set('Cookie', cookie).set(CSRF_HEADER, '1').send(body),
      del: (path: string) => request(app).delete(path).set('Cookie', cookie).set(CSRF_HEADER, '1'),
    }
  }

  it('DELETE /api/sheets/:id closes the live connections of that sheet with 4404 and later upgrades answer 404', async () => {
    const editor = t.connect('editor')
    const viewer = t.connect('viewer')
    await Promise.all([editor.synced(), viewer.synced()])
    expect((await as('owner').del(`/api/sheets/${t.lab.sheetId}`)).status).toBe(204)
    await until(() => editor.closes.length === 1 && viewer.closes.length === 1, 'both connections to close')
    expect(editor.closes[0]).toEqual({ code: CLOSE.sheetDeleted, reason: 'this sheet was deleted' })
    expect(editor.provider.shouldConnect).toBe(false)
    expect(t.server.collab.stats().documents).toBe(0)
    expect((await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.editor)).status).toBe(404)
  })

  it('PATCH of a member role to viewer makes that live connection read-only at once; it stays open', async () => {
    const editor = t.connect('editor')
    const watcher = t.connect('editor2')
    await Promise.all([editor.synced(), watcher.synced()])
    formula(editor.doc).insert(0, '2*')
    await until(() => formula(watcher.doc).toString() === '2*Eg*2', 'the edit before the demotion')
    const res = await as('owner').patch(`/api/labs/${t.lab.labId}/members/${t.lab.userIds.editor}`, { role: 'viewer' })
    expect(res.status).toBe(200)
    const rows = await storedRows(t.lab)
    formula(editor.doc).insert(0, '5*')
    await until(() => editor.denied.length === 1, 'permission denied after the demotion')
    expect(await storedRows(t.lab)).toBe(rows)
    expect(formula(watcher.doc).toString()).toBe('2*Eg*2')
    expect(editor.provider.wsconnected).toBe(true)
    expect(editor.closes).toEqual([])
  })

  it('DELETE of a member disconnects their live connection with 4403', async () => {
    const reviewer = t.connect('reviewer')
    await reviewer.synced()
    expect((await as('owner').del(`/api/labs/${t.lab.labId}/members/${t.lab.userIds.reviewer}`)).status).toBe(204)
    await until(() => reviewer.closes.length === 1, 'the removed reviewer to be disconnected')
    expect(reviewer.closes[0].code).toBe(CLOSE.removed)
    expect((await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.reviewer)).status).toBe(403)
  })

  it('POST /api/auth/sign-out ends the live connections of that session within the recheck period', async () => {
    const editor = t.connect('editor')
    const other = t.connect('editor2')
    await Promise.all([editor.synced(), other.synced()])
    expect((await as('editor').post('/api/auth/sign-out')).status).toBe(204)
    await until(() => editor.closes.length === 1, 'the signed-out connection to close')
    expect(editor.closes[0]).toEqual({ code: CLOSE.sessionEnded, reason: 'you have signed out; sign in again' })
    expect(other.closes).toEqual([])
    expect((await upgradeStatus(t.server, t.lab.sheetId, t.lab.tokens.editor)).status).toBe(401)
  })

  it('a password reset (sessions issued before it end) closes live connections within the recheck period', async () => {
    const editor = t.connect('editor')
    await editor.synced()
    // What setPassword does: every session issued before this second ends.
    await t.lab.handle.db.update(users).set({ sessionsValidFrom: Math.floor(Date.now() / 1000) + 1 }).where(eq(users.id, t.lab.userIds.editor))
    await until(() => editor.closes.length === 1, 'the old session to close')
    expect(editor.closes[0].code).toBe(CLOSE.sessionEnded)
  })

  it('GET /api/sheets/:id/file of a sheet edited live, through POST /api/evaluate, gives the results both editors compute', async () => {
    const a = t.connect('editor')
    const b = t.connect('editor2')
    await Promise.all([a.synced(), b.synced()])
    formula(a.doc).insert(formula(a.doc).length, ' + Eg')
    formula(b.doc).insert(0, '3*')
    await until(() => formula(a.doc).toString() === formula(b.doc).toString() && formula(a.doc).length === 'Eg*2'.length + 7, 'the edits to meet')
    const file = await as('viewer').get(`/api/sheets/${t.lab.sheetId}/file`)
    expect(file.status).toBe(200)
    expect(JSON.parse(file.text).cells).toEqual(docToSheetFile(a.doc).cells)
    const evaluated = await as('viewer').post('/api/evaluate').set('Content-Type', 'application/json').send(file.text)
    expect(evaluated.status).toBe(200)
    const local = evaluateSheet(docToSheetFile(b.doc))
    const x = (r: { cells: { name?: string; value?: unknown; status: string }[] }) => r.cells.find((c) => c.name === 'x')
    expect(x(evaluated.body)).toMatchObject({ status: 'ok' })
    expect(x(evaluated.body)?.value).toBe(x(local)?.value)
    // 3·Eg·2 + Eg = 7 × 1.48 eV = 10.36 eV (closed form); relative tolerance 1e-12 for the eV ↔ J round trip.
    expect(Math.abs((x(local)?.value as number) / 10.36 - 1)).toBeLessThan(1e-12)
    expect(evaluated.body.cells.map((c: { name?: string }) => c.name)).toEqual(local.cells.map((c) => c.name))
  })
})
