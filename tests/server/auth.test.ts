/** Accounts over the API: sign-up and confirmation, sign-in, sessions and their edge cases, reset links, profile. */
import { describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { call, cookieFrom, createTestUser, makeTestApp, sessionCookie, signIn, signUp } from '../utils/server'
import { passwordResets, pendingSignups, users } from '../../server/db/tables'
import { SESSION_COOKIE } from '../../server/services/sessions'

/** Waits until the clock has moved to the next whole second (session tokens carry their issue time in seconds). */
async function nextSecond(): Promise<void> {
  await new Promise((r) => setTimeout(r, 1000 - (Date.now() % 1000) + 20))
}

describe('POST /api/auth/sign-up', () => {
  it('mails a confirmation link and creates the account only when it is opened', async () => {
    const t = await makeTestApp()
    const res = await call(t).post('/api/auth/sign-up', { email: ' Ada@Example.ORG ', name: 'Ada Quell', password: 'ten chars!!' })
    expect(res.status).toBe(201)
    expect(res.headers['set-cookie']).toBeUndefined()
    expect(await t.db.select().from(users)).toHaveLength(0)
    const mail = t.mailer.to('ada@example.org')[0]
    expect(mail.subject).toBe('Confirm your Penumbra account')
    expect(mail.text).toContain('http://penumbra.test/confirm/')
    expect(mail.html).toContain('Confirm and sign in')
    const token = t.mailer.tokenFor('ada@example.org', '/confirm/')
    const confirmed = await call(t).post('/api/auth/confirm', { token, password: 'ten chars!!' })
    expect(confirmed.status).toBe(200)
    expect(confirmed.body.user).toMatchObject({ email: 'ada@example.org', name: 'Ada Quell' })
    const me = await call(t, cookieFrom(confirmed)).get('/api/auth/me')
    expect(me.body.user.email).toBe('ada@example.org')
    const again = await call(t).post('/api/auth/confirm', { token, password: 'ten chars!!' })
    expect(again.status).toBe(410)
  })

  it('says in its reply that the mailed link comes first; sign-in works once it is opened, and keeps working', async () => {
    const t = await makeTestApp()
    const body = { email: 'ines@okafor-lab.example', name: 'Ines Okafor', password: 'absorber film B' }
    const res = await call(t).post('/api/auth/sign-up', body)
    expect(res.status).toBe(201)
    expect(res.body.message).toBe('Check your mail: we sent a link to ines@okafor-lab.example. Open it to finish signing up; after that you can sign in with this e-mail and password.')
    // before the link is opened: the same 401 as an address nobody signed up with
    const early = await call(t).post('/api/auth/sign-in', { email: body.email, password: body.password })
    const nobody = await call(t).post('/api/auth/sign-in', { email: 'nobody@okafor-lab.example', password: body.password })
    expect(early.status).toBe(401)
    expect(early.body).toEqual(nobody.body)
    expect(early.body.error).toMatch(/open the link we mailed you first/)
    const confirmed = await call(t).post('/api/auth/confirm', { token: t.mailer.tokenFor(body.email, '/confirm/'), password: body.password })
    expect(confirmed.status).toBe(200)
    expect((await call(t, cookieFrom(confirmed)).post('/api/auth/sign-out')).status).toBe(204)
    const later = await call(t).post('/api/auth/sign-in', { email: 'Ines@Okafor-Lab.example', password: body.password })
    expect(later.status).toBe(200)
    expect(later.body.user).toMatchObject({ email: body.email, name: 'Ines Okafor' })
    expect((await call(t, cookieFrom(later)).get('/api/auth/me')).body.user.email).toBe(body.email)
  })

  it('gives the same answer for an address that already has an account, and mails its owner instead', async () => {
    const t = await makeTestApp()
    const fresh = await call(t).post('/api/auth/sign-up', { email: 'new@example.org', name: 'A', password: 'long enough one' })
    await createTestUser(t, { email: 'taken@example.org', name: 'Taken' })
    const taken = await call(t).post('/api/auth/sign-up', { email: 'taken@example.org', name: 'B', password: 'long enough one' })
    expect(taken.status).toBe(fresh.status)
    expect(Object.keys(taken.body)).toEqual(Object.keys(fresh.body))
    expect(taken.body.message.replace('taken@example.org', 'X')).toBe(fresh.body.message.replace('new@example.org', 'X'))
    expect(t.mailer.to('taken@example.org')[0].subject).toBe('You already have a Penumbra account')
    expect((await t.db.select().from(pendingSignups)).map((p) => p.email)).toEqual(['new@example.org'])
  })

  it('answers 400 naming each field for a short password and a bad address', async () => {
    const t = await makeTestApp()
    const res = await call(t).post('/api/auth/sign-up', { email: 'not-an-address', name: '', password: 'ninechars' })
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([
      { path: 'email', message: 'must be an e-mail address' },
      { path: 'name', message: 'must not be empty' },
      { path: 'password', message: 'must be at least 10 characters' },
    ])
    expect(res.body.error).toMatch(/^The request was not accepted: email must be an e-mail address \(and 2 more\)\.$/)
  })

  it('POST /api/auth/confirm answers 410 for an expired link and 404 for an unknown one', async () => {
    const t = await makeTestApp()
    await call(t).post('/api/auth/sign-up', { email: 'late@example.org', name: 'Late', password: 'long enough one' })
    const token = t.mailer.tokenFor('late@example.org', '/confirm/')
    await t.db.update(pendingSignups).set({ expiresAt: Date.now() - 1 })
    expect((await call(t).post('/api/auth/confirm', { token, password: 'whatever it was' })).status).toBe(410)
    expect((await call(t).post('/api/auth/confirm', { token: 'x'.repeat(43), password: 'whatever it was' })).status).toBe(404)
  })

  it('POST /api/auth/confirm needs the password chosen at sign-up: a stranger\'s sign-up cannot be finished by the address\'s owner clicking the link', async () => {
    const t = await makeTestApp()
    // someone signs up with another person's address and a password of their own choosing
    await call(t).post('/api/auth/sign-up', { email: 'victim@example.org', name: 'Not Me', password: 'attacker chosen pw' })
    const token = t.mailer.tokenFor('victim@example.org', '/confirm/')
    // the address's owner opens the link they never asked for: without that password, no account is made
    const clicked = await call(t).post('/api/auth/confirm', { token, password: 'what the owner guesses' })
    expect(clicked.status).toBe(403)
    expect(clicked.body.error).toMatch(/not the password chosen when signing up/)
    expect(clicked.headers['set-cookie']).toBeUndefined()
    expect(await t.db.select().from(users)).toHaveLength(0)
    expect((await call(t).post('/api/auth/confirm', { token })).status).toBe(400)
    // a wrong password does not spend the link: the person who did sign up can still finish
    const right = await call(t).post('/api/auth/confirm', { token, password: 'attacker chosen pw' })
    expect(right.status).toBe(200)
  })

  it('stores an argon2id hash, never the password', async () => {
    const t = await makeTestApp()
    await signUp(t, { email: 'hash@example.org', name: 'H', password: 'my secret passphrase' })
    const [row] = await t.db.select().from(users).where(eq(users.email, 'hash@example.org'))
    expect(row.passwordHash.startsWith('$argon2id$')).toBe(true)
    expect(row.passwordHash).not.toContain('my secret passphrase')
  })
})

describe('POST /api/auth/sign-in', () => {
  it('sets an httpOnly, SameSite=Lax session cookie with an expiry', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t, { email: 'mira@lab.example' })
    const res = await call(t).post('/api/auth/sign-in', { email: 'MIRA@lab.example', password: u.password })
    expect(res.status).toBe(200)
    expect(res.body.user).toEqual({ id: u.id, email: 'mira@lab.example', name: u.name })
    const set = (res.headers['set-cookie'] as unknown as string[])[0]
    expect(set).toMatch(new RegExp(`^${SESSION_COOKIE}=`))
    expect(set).toMatch(/; HttpOnly/)
    expect(set).toMatch(/; SameSite=Lax/)
    expect(set).toMatch(/; Max-Age=604800/)
    expect(set).toMatch(/; Expires=/)
  })

  it('answers the same 401 for a wrong password and an unknown address', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const wrong = await call(t).post('/api/auth/sign-in', { email: u.email, password: 'not the password' })
    const unknown = await call(t).post('/api/auth/sign-in', { email: 'nobody@lab.example', password: 'not the password' })
    expect(wrong.status).toBe(401)
    expect(unknown.status).toBe(401)
    expect(wrong.body).toEqual(unknown.body)
    expect(wrong.body).toEqual({ error: 'E-mail or password is wrong. If you have just signed up, open the link we mailed you first.' })
  })
})

describe('session tokens on GET /api/auth/me', () => {
  it('answers 200 { user: null } to a visitor without a session cookie, and 401 on routes that need a session', async () => {
    const t = await makeTestApp()
    const res = await call(t).get('/api/auth/me')
    expect(res.status).toBe(200)
    expect(res.body).toEqual({ user: null })
    expect((await call(t).patch('/api/auth/me', { name: 'Nobody' })).status).toBe(401)
    expect((await call(t).get('/api/labs')).body).toEqual({ error: 'Sign in first.' })
  })

  it('answers 401 for an expired token', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await call(t, await sessionCookie(t, u.id, { ttlSeconds: -5 })).get('/api/auth/me')
    expect(res.status).toBe(401)
    expect(res.body.error).toBe('Your session has expired. Sign in again.')
  })

  it('answers 401 for a tampered token (payload changed, signature kept)', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const other = await createTestUser(t)
    const [name, token] = u.cookie.split('=')
    const [header, , signature] = token.split('.')
    const forged = Buffer.from(JSON.stringify({ sub: other.id, jti: 'x', iss: 'penumbra', exp: Math.floor(Date.now() / 1000) + 3600 })).toString('base64url')
    const res = await call(t, `${name}=${header}.${forged}.${signature}`).get('/api/auth/me')
    expect(res.status).toBe(401)
    expect(res.body.error).toBe('Your session is not valid. Sign in again.')
  })

  it('answers 401 for an unsigned token (alg "none") and for one from another issuer', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const b64 = (o: object) => Buffer.from(JSON.stringify(o)).toString('base64url')
    const claims = { sub: u.id, jti: 'j', iss: 'penumbra', iat: Math.floor(Date.now() / 1000), exp: Math.floor(Date.now() / 1000) + 3600 }
    const unsigned = `${b64({ alg: 'none' })}.${b64(claims)}.`
    expect((await call(t, `${SESSION_COOKIE}=${unsigned}`).get('/api/auth/me')).body).toEqual({ error: 'Your session is not valid. Sign in again.' })
    const { SignJWT } = await import('jose')
    const foreign = await new SignJWT({}).setProtectedHeader({ alg: 'HS256' }).setSubject(u.id).setJti('k').setIssuer('someone-else').setIssuedAt().setExpirationTime('1h').sign(t.secret)
    expect((await call(t, `${SESSION_COOKIE}=${foreign}`).get('/api/auth/me')).status).toBe(401)
  })

  it('answers 401 for a token signed with another secret', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const cookie = await sessionCookie(t, u.id, { secret: new TextEncoder().encode('some-other-secret-of-forty-characters!!') })
    expect((await call(t, cookie).get('/api/auth/me')).status).toBe(401)
  })

  it('answers 401 for garbage in the cookie', async () => {
    const t = await makeTestApp()
    const res = await call(t, `${SESSION_COOKIE}=not-a-token`).get('/api/auth/me')
    expect(res.status).toBe(401)
    expect(res.body.error).toBe('Your session is not valid. Sign in again.')
  })

  it('answers 401 for the token of a deleted user', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    await t.db.delete(users).where(eq(users.id, u.id))
    const res = await call(t, u.cookie).get('/api/auth/me')
    expect(res.status).toBe(401)
    expect(res.body.error).toBe('Your account no longer exists.')
  })

  it('answers 401 for a session after POST /api/auth/sign-out revoked it', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const cookie = await signIn(t, u.email, u.password)
    expect((await call(t, cookie).get('/api/auth/me')).status).toBe(200)
    const out = await call(t, cookie).post('/api/auth/sign-out')
    expect(out.status).toBe(204)
    expect((out.headers['set-cookie'] as unknown as string[])[0]).toMatch(new RegExp(`^${SESSION_COOKIE}=;`))
    const res = await call(t, cookie).get('/api/auth/me')
    expect(res.status).toBe(401)
    expect(res.body.error).toBe('You were signed out. Sign in again.')
    // other sessions of the same user continue
    expect((await call(t, u.cookie).get('/api/auth/me')).status).toBe(200)
  })
})

describe('password reset', () => {
  it('POST /api/auth/reset-request answers 202 with the same message whether or not the address has an account', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t, { email: 'known@lab.example' })
    const known = await call(t).post('/api/auth/reset-request', { email: u.email })
    const unknown = await call(t).post('/api/auth/reset-request', { email: 'unknown@lab.example' })
    expect([known.status, unknown.status]).toEqual([202, 202])
    expect(known.body.message.replace(u.email, 'X')).toBe(unknown.body.message.replace('unknown@lab.example', 'X'))
    expect(t.mailer.to(u.email)).toHaveLength(1)
    expect(t.mailer.to('unknown@lab.example')).toHaveLength(0)
  })

  it('POST /api/auth/reset sets the new password once, and ends older sessions', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const oldCookie = await signIn(t, u.email, u.password)
    await call(t).post('/api/auth/reset-request', { email: u.email })
    const mail = t.mailer.to(u.email)[0]
    expect(mail.subject).toBe('Choose a new Penumbra password')
    expect(mail.html).toContain('Choose a new password')
    const token = t.mailer.tokenFor(u.email, '/reset/')
    await nextSecond()
    const res = await call(t).post('/api/auth/reset', { token, password: 'the new password' })
    expect(res.status).toBe(204)
    expect((await call(t).post('/api/auth/sign-in', { email: u.email, password: u.password })).status).toBe(401)
    expect((await call(t).post('/api/auth/sign-in', { email: u.email, password: 'the new password' })).status).toBe(200)
    expect((await call(t, oldCookie).get('/api/auth/me')).status).toBe(401)
    const reuse = await call(t).post('/api/auth/reset', { token, password: 'yet another password' })
    expect(reuse.status).toBe(410)
    expect(reuse.body.error).toMatch(/already been used/)
  })

  it('POST /api/auth/reset answers 410 for an expired link, 404 for an unknown one, 400 for a short password', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    await call(t).post('/api/auth/reset-request', { email: u.email })
    const token = t.mailer.tokenFor(u.email, '/reset/')
    expect((await call(t).post('/api/auth/reset', { token, password: 'short' })).body.issues).toEqual([{ path: 'password', message: 'must be at least 10 characters' }])
    await t.db.update(passwordResets).set({ expiresAt: Date.now() - 1 })
    const expired = await call(t).post('/api/auth/reset', { token, password: 'the new password' })
    expect(expired.status).toBe(410)
    expect(expired.body.error).toMatch(/expired/)
    expect((await call(t).post('/api/auth/reset', { token: 'y'.repeat(43), password: 'the new password' })).status).toBe(404)
  })

  it('using one reset link spends the other open links of that user', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    await call(t).post('/api/auth/reset-request', { email: u.email })
    const first = t.mailer.tokenFor(u.email, '/reset/')
    await call(t).post('/api/auth/reset-request', { email: u.email })
    const second = t.mailer.tokenFor(u.email, '/reset/')
    expect(second).not.toBe(first)
    expect((await call(t).post('/api/auth/reset', { token: second, password: 'the new password' })).status).toBe(204)
    expect((await call(t).post('/api/auth/reset', { token: first, password: 'another new password' })).status).toBe(410)
  })
})

describe('profile', () => {
  it('PATCH /api/auth/me renames the user', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).patch('/api/auth/me', { name: '  Mira H.  ' })
    expect(res.body.user.name).toBe('Mira H.')
  })

  it('POST /api/auth/password answers 403 for a wrong current password and keeps the caller signed in on success', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const wrong = await call(t, u.cookie).post('/api/auth/password', { currentPassword: 'nope', newPassword: 'a new long password' })
    expect(wrong.status).toBe(403)
    await nextSecond()
    const ok = await call(t, u.cookie).post('/api/auth/password', { currentPassword: u.password, newPassword: 'a new long password' })
    expect(ok.status).toBe(204)
    expect((await call(t, u.cookie).get('/api/auth/me')).status).toBe(401)
    expect((await call(t, cookieFrom(ok)).get('/api/auth/me')).status).toBe(200)
  })
})

describe('pruneExpired', () => {
  it('pruneExpired(db) drops revoked sessions past expiry and links a day past theirs, and keeps the rest', async () => {
    const { pruneExpired } = await import('../../server/services/housekeeping')
    const { sessionsRevoked } = await import('../../server/db/tables')
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const now = Date.now()
    await t.db.insert(sessionsRevoked).values([{ jti: 'old', expiresAt: Math.floor(now / 1000) - 10 }, { jti: 'live', expiresAt: Math.floor(now / 1000) + 3600 }])
    await t.db.insert(passwordResets).values([
      { id: 'a', userId: u.id, tokenHash: 'ha', createdAt: now, expiresAt: now - 2 * 24 * 3600 * 1000 },
      { id: 'b', userId: u.id, tokenHash: 'hb', createdAt: now, expiresAt: now - 1000 },
    ])
    expect(await pruneExpired(t.db, now)).toEqual({ sessions: 1, signups: 0, resets: 1 })
    expect((await t.db.select().from(sessionsRevoked)).map((r) => r.jti)).toEqual(['live'])
    expect((await t.db.select().from(passwordResets)).map((r) => r.id)).toEqual(['b'])
  })
})
