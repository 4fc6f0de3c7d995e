// Ending a session reaches open websockets at once — not at the next periodic recheck, which these servers put ten
// minutes away: sign-out, a password change and a password reset through the REST app close the person's live
// connections (4401) at once, on this instance and, through the bus, on every other one.
import { describe, expect, it } from 'vitest'
import request from 'supertest'
import { eq } from 'drizzle-orm'
import { createApp } from '../../server/app'
import { defaultConfig } from '../../server/config'
import { users } from '../../server/db/tables'
import { hashPassword } from '../../server/services/passwords'
import { SESSION_COOKIE } from '../../server/services/sessions'
import { CLOSE, type Collab } from '../../server/collab/index'
import { createMemoryBus } from '../../server/collab/bus'
import { CSRF_HEADER } from '../../shared/schema/api'
import { TEST_ARGON2, fakeMailer } from '../utils/server'
import { PEOPLE, SECRET, until, type Person } from './support/fixture'
import { useCollab } from './support/useCollab'

const FAR = 10 * 60_000
const PASSWORD = 'the old lab password'

describe('collab: a session that ends', () => {
  const t = useCollab({ start: false })

  async function setup() {
    const bus = createMemoryBus()
    const one = await t.start({ bus, instanceId: 'one', recheckMs: FAR })
    const two = await t.another({ bus, instanceId: 'two', recheckMs: FAR })
    const limits = { windowMs: 60_000, limit: 10_000 }
    const mailer = fakeMailer()
    const config = defaultConfig({ publicUrl: 'http://penumbra.test', argon2: TEST_ARGON2, limits: { signIn: limits, mail: limits, token: limits } })
    // the REST app talks to instance one only; instance two hears of it on the bus
    const collab: Collab = one.collab
    const app = createApp({
      db: t.lab.handle.db,
      secret: SECRET,
      mailer,
      config,
      hooks: {
        membershipChanged: (labId, userId) => collab.membershipChanged(labId, userId),
        sheetDeleted: (sheetId) => collab.sheetDeleted(sheetId),
        sessionsEnded: (userId) => collab.sessionsEnded(userId),
      },
    })
    const hash = await hashPassword(config, PASSWORD)
    await t.lab.handle.db.update(users).set({ passwordHash: hash }).where(eq(users.id, t.lab.userIds.editor))
    const post = (person: Person | null, path: string, body?: object) => {
      const r = request(app).post(path).set(CSRF_HEADER, '1')
      return (person ? r.set('Cookie', `${SESSION_COOKIE}=${t.lab.tokens[person]}`) : r).send(body)
    }
    const editorHere = t.connect('editor', { server: one })
    const editorThere = t.connect('editor', { server: two })
    const other = t.connect('editor2', { server: two })
    await Promise.all([editorHere.synced(), editorThere.synced(), other.synced()])
    return { post, mailer, editorHere, editorThere, other }
  }

  /** Closed by the event itself: the periodic recheck is ten minutes away (no timing is asserted here). */
  async function closedAtOnce(clients: { closes: { code: number }[] }[]): Promise<void> {
    await until(() => clients.every((c) => c.closes.length === 1), 'the connections to close')
    for (const c of clients) expect(c.closes[0].code).toBe(CLOSE.sessionEnded)
  }

  it('POST /api/auth/sign-out closes that session’s sockets on both instances; others stay', async () => {
    const s = await setup()
    expect((await s.post('editor', '/api/auth/sign-out')).status).toBe(204)
    await closedAtOnce([s.editorHere, s.editorThere])
    expect(s.other.closes).toEqual([])
  })

  it('POST /api/auth/password closes the sockets of the older session on both instances', async () => {
    // no wait: sessions end to the millisecond they were issued in (the token's `ims` claim)
    const s = await setup()
    const res = await s.post('editor', '/api/auth/password', { currentPassword: PASSWORD, newPassword: 'a brand new lab password' })
    expect(res.status).toBe(204)
    await closedAtOnce([s.editorHere, s.editorThere])
    expect(s.other.closes).toEqual([])
  })

  it('POST /api/auth/reset closes every older socket of that person on both instances', async () => {
    const s = await setup()
    expect((await s.post(null, '/api/auth/reset-request', { email: PEOPLE.editor.email })).status).toBe(202)
    const token = s.mailer.tokenFor(PEOPLE.editor.email, '/reset/')
    expect((await s.post(null, '/api/auth/reset', { token, password: 'a brand new lab password' })).status).toBe(204)
    await closedAtOnce([s.editorHere, s.editorThere])
    expect(s.other.closes).toEqual([])
  })
})
