/** Labs, members and invitations over the API: roles, the last owner, mailed invitations and their edge cases. */
import { describe, expect, it } from 'vitest'
import { call, cookieFrom, createTestUser, makeTestApp, seedLab } from '../utils/server'
import { invitations } from '../../server/db/tables'

describe('POST /api/labs', () => {
  it('creates a lab whose creator is its owner, listed by GET /api/labs', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).post('/api/labs', { name: '  Optics Group  ' })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ name: 'Optics Group', role: 'owner', memberCount: 1, sheetCount: 0 })
    const list = await call(t, u.cookie).get('/api/labs')
    expect(list.body.labs.map((l: { id: string }) => l.id)).toEqual([res.body.id])
    const other = await createTestUser(t)
    expect((await call(t, other.cookie).get('/api/labs')).body.labs).toEqual([])
  })

  it('answers 400 saying what is wrong with a name of the wrong type', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).post('/api/labs', { name: 42 })
    expect(res.status).toBe(400)
    expect(res.body).toEqual({ error: 'The request was not accepted: name must be a string, not a number.', issues: [{ path: 'name', message: 'must be a string, not a number' }] })
  })

  it('answers 400 with the field for an empty name', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).post('/api/labs', { name: '   ' })
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([{ path: 'name', message: 'must not be empty' }])
  })
})

describe('GET /api/labs/:labId/members', () => {
  it('lists members owners first, with the caller role in GET /api/labs/:labId', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.viewer.cookie).get(`/api/labs/${lab.labId}/members`)
    expect(res.body.members.map((m: { role: string }) => m.role)).toEqual(['owner', 'editor', 'reviewer', 'viewer', 'viewer'])
    expect((await call(t, lab.users.reviewer.cookie).get(`/api/labs/${lab.labId}`)).body).toMatchObject({ role: 'reviewer', memberCount: 5, sheetCount: 2 })
  })
})

describe('PATCH /api/labs/:labId/members/:userId', () => {
  it('changes a role, which takes effect on the next request, and tells the live layer', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    expect((await call(t, lab.users.viewer.cookie).post(`/api/labs/${lab.labId}/sheets`, { title: 'x' })).status).toBe(403)
    const res = await call(t, lab.users.owner.cookie).patch(`/api/labs/${lab.labId}/members/${lab.users.viewer.id}`, { role: 'editor' })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ userId: lab.users.viewer.id, role: 'editor' })
    expect(t.hookCalls).toEqual([{ hook: 'membershipChanged', args: [lab.labId, lab.users.viewer.id] }])
    expect((await call(t, lab.users.viewer.cookie).post(`/api/labs/${lab.labId}/sheets`, { title: 'x' })).status).toBe(201)
  })

  it('answers 409 when demoting the only owner, and allows it once there is a second owner', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const owner = lab.users.owner
    const demote = await call(t, owner.cookie).patch(`/api/labs/${lab.labId}/members/${owner.id}`, { role: 'editor' })
    expect(demote.status).toBe(409)
    expect(demote.body.error).toMatch(/at least one owner/)
    await call(t, owner.cookie).patch(`/api/labs/${lab.labId}/members/${lab.users.editor.id}`, { role: 'owner' })
    expect((await call(t, owner.cookie).patch(`/api/labs/${lab.labId}/members/${owner.id}`, { role: 'editor' })).status).toBe(200)
    // the former owner is now an editor and may no longer change roles
    expect((await call(t, owner.cookie).patch(`/api/labs/${lab.labId}/members/${lab.users.viewer.id}`, { role: 'editor' })).status).toBe(403)
  })

  it('answers 404 for someone who is not a member and 400 for an unknown role', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    expect((await call(t, lab.users.owner.cookie).patch(`/api/labs/${lab.labId}/members/${lab.users.outsider.id}`, { role: 'editor' })).status).toBe(404)
    const bad = await call(t, lab.users.owner.cookie).patch(`/api/labs/${lab.labId}/members/${lab.users.viewer.id}`, { role: 'admin' })
    expect(bad.status).toBe(400)
    expect(bad.body.issues).toEqual([{ path: 'role', message: 'must be one of owner, editor, reviewer, viewer' }])
  })
})

describe('DELETE /api/labs/:labId/members/:userId', () => {
  it('removes a member, who then gets 404 for the lab, and tells the live layer', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    expect((await call(t, lab.users.owner.cookie).del(`/api/labs/${lab.labId}/members/${lab.users.editor.id}`)).status).toBe(204)
    expect(t.hookCalls).toEqual([{ hook: 'membershipChanged', args: [lab.labId, lab.users.editor.id] }])
    expect((await call(t, lab.users.editor.cookie).get(`/api/labs/${lab.labId}`)).status).toBe(404)
    expect((await call(t, lab.users.editor.cookie).get(`/api/sheets/${lab.editorSheetId}`)).status).toBe(404)
  })

  it('lets the only owner leave only after naming another owner', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const owner = lab.users.owner
    expect((await call(t, owner.cookie).del(`/api/labs/${lab.labId}/members/${owner.id}`)).status).toBe(409)
    await call(t, owner.cookie).patch(`/api/labs/${lab.labId}/members/${lab.users.reviewer.id}`, { role: 'owner' })
    expect((await call(t, owner.cookie).del(`/api/labs/${lab.labId}/members/${owner.id}`)).status).toBe(204)
    expect((await call(t, lab.users.reviewer.cookie).get(`/api/labs/${lab.labId}/members`)).body.members[0]).toMatchObject({ userId: lab.users.reviewer.id, role: 'owner' })
  })
})

describe('invitations', () => {
  it('POST /api/labs/:labId/invitations mails an accept link with the lab, the role and the expiry', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t, 'Halvorsen Thin-Film Lab')
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: 'Postdoc@Elsewhere.example', role: 'editor' })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ email: 'postdoc@elsewhere.example', role: 'editor', invitedBy: 'The owner' })
    expect(res.body.expiresAt - res.body.createdAt).toBe(7 * 24 * 3600 * 1000)
    const mail = t.mailer.to('postdoc@elsewhere.example')[0]
    expect(mail.subject).toBe('The owner invites you to Halvorsen Thin-Film Lab on Penumbra')
    expect(mail.text).toContain('as editor')
    expect(mail.text).toMatch(/http:\/\/penumbra\.test\/invitations\/[A-Za-z0-9_-]{43}/)
    expect(mail.html).toContain('Accept the invitation')
    const listed = await call(t, lab.users.owner.cookie).get(`/api/labs/${lab.labId}/invitations`)
    expect(listed.body.invitations.map((i: { email: string }) => i.email)).toEqual(['postdoc@elsewhere.example'])
  })

  it('a new person accepts with a name and password, is signed in, and has the role', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: 'new@elsewhere.example', role: 'reviewer' })
    const token = t.mailer.tokenFor('new@elsewhere.example', '/invitations/')
    const preview = await call(t).get(`/api/invitations/${token}`)
    expect(preview.body).toMatchObject({ labName: lab.labName, role: 'reviewer', email: 'new@elsewhere.example', invitedBy: 'The owner', accountExists: false, signedIn: false })
    const missing = await call(t).post(`/api/invitations/${token}/accept`, {})
    expect(missing.status).toBe(400)
    expect(missing.body.issues.map((i: { path: string }) => i.path)).toEqual(['name', 'password'])
    const res = await call(t).post(`/api/invitations/${token}/accept`, { name: 'Noor Amari', password: 'noor amari password' })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ labId: lab.labId, labName: lab.labName, role: 'reviewer', user: { email: 'new@elsewhere.example', name: 'Noor Amari' } })
    const cookie = cookieFrom(res)
    expect((await call(t, cookie).get(`/api/labs/${lab.labId}`)).body.role).toBe('reviewer')
    expect((await call(t, cookie).patch(`/api/sheets/${lab.editorSheetId}`, { title: 'no' })).status).toBe(403)
    expect((await call(t).post('/api/auth/sign-in', { email: 'new@elsewhere.example', password: 'noor amari password' })).status).toBe(200)
  })

  it('an existing account accepts while signed in; without signing in it answers 409', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const guest = lab.users.outsider
    await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: guest.email, role: 'viewer' })
    const token = t.mailer.tokenFor(guest.email, '/invitations/')
    expect((await call(t, guest.cookie).get(`/api/invitations/${token}`)).body).toMatchObject({ accountExists: true, signedIn: true })
    const anon = await call(t).post(`/api/invitations/${token}/accept`, { name: 'X', password: 'some long password' })
    expect(anon.status).toBe(409)
    expect(anon.body.error).toMatch(/Sign in, then accept/)
    const res = await call(t, guest.cookie).post(`/api/invitations/${token}/accept`, {})
    expect(res.status).toBe(200)
    expect((await call(t, guest.cookie).get(`/api/labs/${lab.labId}`)).body.role).toBe('viewer')
  })

  it('accepting with an account of another address answers 403 asking to sign in with the invited one; no role is given', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: 'Invited@Elsewhere.example', role: 'editor' })
    const token = t.mailer.tokenFor('invited@elsewhere.example', '/invitations/')
    const stranger = lab.users.outsider
    const res = await call(t, stranger.cookie).post(`/api/invitations/${token}/accept`, {})
    expect(res.status).toBe(403)
    expect(res.body.error).toBe(
      `This invitation was sent to invited@elsewhere.example, and you are signed in as ${stranger.email}. Sign out, then sign in with invited@elsewhere.example (or create its account) to accept it.`,
    )
    expect((await call(t, stranger.cookie).get(`/api/labs/${lab.labId}`)).status).toBe(404)
    // the link still works for the invited address
    const invited = await createTestUser(t, { email: 'invited@elsewhere.example' })
    expect((await call(t, invited.cookie).post(`/api/invitations/${token}/accept`, {})).status).toBe(200)
    expect((await call(t, invited.cookie).get(`/api/labs/${lab.labId}`)).body.role).toBe('editor')
  })

  it('a link works once: the second accept answers 410', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const invited = await createTestUser(t, { email: 'once@elsewhere.example' })
    await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: 'once@elsewhere.example', role: 'viewer' })
    const token = t.mailer.tokenFor('once@elsewhere.example', '/invitations/')
    expect((await call(t, invited.cookie).post(`/api/invitations/${token}/accept`, {})).status).toBe(200)
    const other = await createTestUser(t)
    const again = await call(t, other.cookie).post(`/api/invitations/${token}/accept`, {})
    expect(again.status).toBe(410)
    expect(again.body.error).toMatch(/already been used/)
    expect((await call(t).get(`/api/invitations/${token}`)).status).toBe(410)
  })

  it('an expired link answers 410 and grants nothing', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: 'late@elsewhere.example', role: 'editor' })
    const token = t.mailer.tokenFor('late@elsewhere.example', '/invitations/')
    await t.db.update(invitations).set({ expiresAt: Date.now() - 1 })
    const res = await call(t, lab.users.outsider.cookie).post(`/api/invitations/${token}/accept`, {})
    expect(res.status).toBe(410)
    expect(res.body.error).toMatch(/expired/)
    expect((await call(t, lab.users.outsider.cookie).get(`/api/labs/${lab.labId}`)).status).toBe(404)
    expect((await call(t, lab.users.owner.cookie).get(`/api/labs/${lab.labId}/invitations`)).body.invitations).toEqual([])
  })

  it('a withdrawn or replaced invitation answers 404', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const owner = lab.users.owner.cookie
    const first = await call(t, owner).post(`/api/labs/${lab.labId}/invitations`, { email: 'twice@elsewhere.example', role: 'viewer' })
    const firstToken = t.mailer.tokenFor('twice@elsewhere.example', '/invitations/')
    await call(t, owner).post(`/api/labs/${lab.labId}/invitations`, { email: 'twice@elsewhere.example', role: 'editor' })
    const secondToken = t.mailer.tokenFor('twice@elsewhere.example', '/invitations/')
    expect((await call(t).get(`/api/invitations/${firstToken}`)).status).toBe(404)
    expect((await call(t).get(`/api/invitations/${secondToken}`)).body.role).toBe('editor')
    expect((await call(t, owner).del(`/api/labs/${lab.labId}/invitations/${first.body.id}`)).status).toBe(404)
    const pending = (await call(t, owner).get(`/api/labs/${lab.labId}/invitations`)).body.invitations
    expect((await call(t, owner).del(`/api/labs/${lab.labId}/invitations/${pending[0].id}`)).status).toBe(204)
    expect((await call(t).get(`/api/invitations/${secondToken}`)).status).toBe(404)
  })

  it('POST /api/labs/:labId/invitations answers alike for an address with an account and one without, and mails the same words', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const owner = lab.users.owner.cookie
    const known = await call(t, owner).post(`/api/labs/${lab.labId}/invitations`, { email: lab.users.outsider.email, role: 'viewer' })
    const unknown = await call(t, owner).post(`/api/labs/${lab.labId}/invitations`, { email: 'nobody-yet@elsewhere.example', role: 'viewer' })
    expect([known.status, unknown.status]).toEqual([201, 201])
    expect(Object.keys(known.body).sort()).toEqual(Object.keys(unknown.body).sort())
    const strip = (m: { subject: string; text: string }, email: string) => ({ subject: m.subject, text: m.text.replace(email, 'X').replace(/invitations\/[\w-]+/, 'invitations/T') })
    expect(strip(t.mailer.to(lab.users.outsider.email)[0], lab.users.outsider.email)).toEqual(strip(t.mailer.to('nobody-yet@elsewhere.example')[0], 'nobody-yet@elsewhere.example'))
  })

  it('inviting a current member answers 409', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const res = await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: lab.users.editor.email, role: 'viewer' })
    expect(res.status).toBe(409)
    expect(t.mailer.sent).toHaveLength(0)
  })
})
