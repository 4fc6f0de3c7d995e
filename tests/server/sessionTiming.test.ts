// A password change or reset ends every session issued before it, to the millisecond: a session signed in the same
// second just before the change (an attacker's, say) must not survive it, and the session that made the change
// continues with the fresh token it is handed.
import { describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { SignJWT } from 'jose'
import { call, cookieFrom, createTestUser, makeTestApp, signIn } from '../utils/server'
import { users } from '../../server/db/tables'
import { SESSION_COOKIE } from '../../server/services/sessions'

describe('sessions ended by a password change or reset', () => {
  it('ends a session signed in a moment before POST /api/auth/password, in the same second', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const mine = await signIn(t, u.email, u.password)
    const theirs = await signIn(t, u.email, u.password)
    const changed = await call(t, mine).post('/api/auth/password', { currentPassword: u.password, newPassword: 'a brand new lab password' })
    expect(changed.status).toBe(204)
    const res = await call(t, theirs).get('/api/auth/me')
    expect(res.status).toBe(401)
    expect(res.body.error).toBe('You were signed out. Sign in again.')
    // the changer continues on the fresh token the answer set
    expect((await call(t, cookieFrom(changed)).get('/api/auth/me')).status).toBe(200)
  })

  it('ends a session signed in a moment before POST /api/auth/reset, in the same second', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const before = await signIn(t, u.email, u.password)
    expect((await call(t).post('/api/auth/reset-request', { email: u.email })).status).toBe(202)
    const token = t.mailer.tokenFor(u.email, '/reset/')
    expect((await call(t).post('/api/auth/reset', { token, password: 'a brand new lab password' })).status).toBe(204)
    expect((await call(t, before).get('/api/auth/me')).status).toBe(401)
    expect((await call(t, await signIn(t, u.email, 'a brand new lab password')).get('/api/auth/me')).status).toBe(200)
  })

  it('reads a reset time stored in seconds by an older build, and a token without the millisecond claim by its iat', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const nowS = Math.floor(Date.now() / 1000)
    await t.db.update(users).set({ sessionsValidFrom: nowS }).where(eq(users.id, u.id))
    const old = (iat: number) => new SignJWT({}).setProtectedHeader({ alg: 'HS256' }).setSubject(u.id).setJti(`j${iat}`).setIssuer('penumbra').setIssuedAt(iat).setExpirationTime(nowS + 3600).sign(t.secret)
    expect((await call(t, `${SESSION_COOKIE}=${await old(nowS - 5)}`).get('/api/auth/me')).status).toBe(401)
    expect((await call(t, `${SESSION_COOKIE}=${await old(nowS)}`).get('/api/auth/me')).status).toBe(200)
  })
})
