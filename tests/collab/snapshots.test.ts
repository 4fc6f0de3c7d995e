// Snapshots with the live sheet: freezing reads what editors typed over the websocket; nothing sent over the
// websocket afterwards (an editor's edit, a reader's refused update) changes a snapshot.
import { afterAll, beforeEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import type { Express } from 'express'
import * as Y from 'yjs'
import { eq } from 'drizzle-orm'
import { createApp } from '../../server/app'
import { defaultConfig } from '../../server/config'
import { closeSharedEvaluator } from '../../server/services/evaluation'
import { SESSION_COOKIE } from '../../server/services/sessions'
import { snapshots } from '../../server/db/tables'
import { CSRF_HEADER } from '../../shared/schema/api'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { fakeMailer } from '../utils/server'
import { SECRET, until, type Person } from './support/fixture'
import { useCollab } from './support/useCollab'

function source(doc: Y.Doc): Y.Text {
  return cellsOf(doc).toArray().find((m) => m.get('name') === 'x')!.get('source') as Y.Text
}

describe('snapshots of a sheet being edited live', () => {
  const t = useCollab()
  let app: Express
  beforeEach(() => {
    const limits = { windowMs: 60_000, limit: 10_000 }
    app = createApp({ db: t.lab.handle.db, secret: SECRET, mailer: fakeMailer(), config: defaultConfig({ publicUrl: 'http://penumbra.test', limits: { signIn: limits, mail: limits, token: limits } }) })
  })
  afterAll(() => closeSharedEvaluator())
  const as = (person: Person) => {
    const cookie = `${SESSION_COOKIE}=${t.lab.tokens[person]}`
    return {
      get: (path: string) => request(app).get(path).set('Cookie', cookie),
      post: (path: string, body: object) => request(app).post(path).set('Cookie', cookie).set(CSRF_HEADER, '1').send(body),
    }
  }

  it('POST …/snapshots freezes what the editor typed; later websocket edits and a reader’s updates leave it unchanged', async () => {
    const editor = t.connect('editor')
    const reviewer = t.connect('reviewer')
    await Promise.all([editor.synced(), reviewer.synced()])
    source(editor.doc).insert(0, '3*')
    await until(() => source(reviewer.doc).toString() === '3*Eg*2', 'the edit to reach the reviewer')
    const made = await as('editor').post(`/api/sheets/${t.lab.sheetId}/snapshots`, { message: 'tripled' })
    expect(made.status).toBe(201)
    const row = async () => (await t.lab.handle.db.select().from(snapshots).where(eq(snapshots.id, made.body.id)))[0]
    const before = await row()
    expect(JSON.parse(before.file).cells.find((c: { name?: string }) => c.name === 'x').source).toBe('3*Eg*2')
    const x = JSON.parse(before.results).cells.find((c: { name?: string }) => c.name === 'x')
    expect(x.value).toBeCloseTo(1.48 * 6, 12)

    source(editor.doc).delete(0, 2)
    source(reviewer.doc).insert(0, '7*')
    await until(() => reviewer.denied.length === 1, 'the reviewer’s update to be refused')
    await until(() => source(reviewer.doc).toString().startsWith('7*Eg*2') || source(editor.doc).toString() === 'Eg*2', 'the editor’s edit')
    const after = await row()
    expect(after).toEqual(before)
    const detail = await as('viewer').get(`/api/snapshots/${made.body.id}`)
    expect(detail.body.hash).toBe(before.hash)
    expect(detail.body.file.cells.find((c: { name?: string }) => c.name === 'x').source).toBe('3*Eg*2')
  })
})
