/** Cross-cutting guards: the CSRF rule, helmet headers, rate limits, the error shape and the JSON 404. */
import { describe, expect, it } from 'vitest'
import request from 'supertest'
import { call, createTestUser, makeTestApp, seedLab, type TestApp } from '../utils/server'

describe('state-changing requests without a JSON body or the X-Penumbra-Request header', () => {
  it('POST /api/labs as a cross-site form (urlencoded) answers 403 and creates nothing', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await request(t.app).post('/api/labs').set('Cookie', u.cookie).type('form').send('name=Evil')
    expect(res.status).toBe(403)
    expect(res.body.error).toBe('This request needs a JSON body or the X-Penumbra-Request header.')
    expect((await call(t, u.cookie).get('/api/labs')).body.labs).toEqual([])
  })

  it('DELETE /api/sheets/:sheetId without the header answers 403; with it, 204', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    expect((await request(t.app).delete(`/api/sheets/${lab.ownerSheetId}`).set('Cookie', lab.users.owner.cookie)).status).toBe(403)
    expect((await call(t, lab.users.owner.cookie).del(`/api/sheets/${lab.ownerSheetId}`)).status).toBe(204)
  })

  it('POST /api/auth/sign-out as a text/plain form answers 403 and keeps the session', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    expect((await request(t.app).post('/api/auth/sign-out').set('Cookie', u.cookie).set('Content-Type', 'text/plain').send('x')).status).toBe(403)
    expect((await call(t, u.cookie).get('/api/auth/me')).status).toBe(200)
  })

  it('a JSON body alone is enough (no header needed)', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await request(t.app).post('/api/labs').set('Cookie', u.cookie).set('Content-Type', 'application/json').send('{"name":"Lab"}')
    expect(res.status).toBe(201)
  })
})

describe('headers', () => {
  it('GET /api/health carries helmet headers and no x-powered-by', async () => {
    const t = await makeTestApp()
    const res = await request(t.app).get('/api/health')
    expect(res.body).toEqual({ ok: true, version: expect.any(String) })
    expect(res.headers['x-content-type-options']).toBe('nosniff')
    expect(res.headers['x-frame-options']).toBe('SAMEORIGIN')
    expect(res.headers['content-security-policy']).toContain("script-src 'self'")
    expect(res.headers['x-powered-by']).toBeUndefined()
    expect(res.headers['cache-control']).toBe('no-store')
  })
})

describe('content security policy', () => {
  /** The policy's directives by name, e.g. { 'connect-src': ["'self'"] }. */
  function directives(header: string): Record<string, string[]> {
    return Object.fromEntries(
      header
        .split(';')
        .map((d) => d.trim().split(/\s+/))
        .filter((parts) => parts[0])
        .map(([name, ...values]) => [name, values]),
    )
  }

  it('GET / and GET /api/health keep connect-src to the app itself, so no page can post or upload elsewhere', async () => {
    const t = await makeTestApp()
    for (const path of ['/api/health', '/sign-in']) {
      const res = await request(t.app).get(path)
      const csp = directives(String(res.headers['content-security-policy'] ?? ''))
      expect(csp['connect-src'], path).toEqual(["'self'"])
      // forms post only to the app; frames, objects and the base address cannot point elsewhere
      expect(csp['form-action'], path).toEqual(["'self'"])
      expect(csp['frame-ancestors'], path).toEqual(["'self'"])
      expect(csp['object-src'], path).toEqual(["'none'"])
      expect(csp['base-uri'], path).toEqual(["'self'"])
      // every fetch directive names only the app, data: and blob: (fonts, images and workers of its own)
      for (const name of ['default-src', 'script-src', 'img-src', 'font-src', 'worker-src', 'style-src'])
        for (const source of csp[name] ?? []) expect(["'self'", 'data:', 'blob:', "'unsafe-inline'"].includes(source) ? source : `${name} ${source}`, path).toBe(source)
    }
  })
})

describe('errors', () => {
  it('an unknown API route answers a JSON 404', async () => {
    const t = await makeTestApp()
    const res = await request(t.app).get('/api/nothing/here')
    expect(res.status).toBe(404)
    expect(res.body).toEqual({ error: 'There is nothing at GET /nothing/here.' })
    expect((await request(t.app).get('/not-a-page')).body.error).toMatch(/nothing at GET \/not-a-page/)
  })

  it('an upload in the wrong form field answers 400 naming the field, and a non-UTF-8 charset 415', async () => {
    const t = await makeTestApp()
    const lab = await seedLab(t)
    const wrongField = await request(t.app)
      .post(`/api/labs/${lab.labId}/sheets`)
      .set('Cookie', lab.users.owner.cookie)
      .set('X-Penumbra-Request', '1')
      .attach('sheet', Buffer.from('{}'), 'film.penumbra.json')
    expect(wrongField.status).toBe(400)
    expect(wrongField.body).toEqual({
      error: 'The upload was not accepted: send the sheet file in the form field "file", not "sheet".',
      issues: [{ path: 'sheet', message: 'send the sheet file in the form field "file", not "sheet"' }],
    })
    const latin1 = await request(t.app).post('/api/labs').set('Cookie', lab.users.owner.cookie).set('Content-Type', 'application/json; charset=latin1').send('{"name":"x"}')
    expect(latin1.status).toBe(415)
    expect(latin1.body.error).toBe("The request body's charset (latin1) is not supported: send UTF-8.")
  })

  it('a JSON body over the limit answers 413 naming the limit, and creates nothing', async () => {
    const t = await makeTestApp({ config: { maxBodyBytes: 4096 } })
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).post('/api/labs', { name: 'x'.repeat(5000) })
    expect(res.status).toBe(413)
    expect(res.body).toEqual({ error: 'The request body is larger than 4 KB, the most this server accepts.' })
    expect((await call(t, u.cookie).get('/api/labs')).body.labs).toEqual([])
  })

  it('malformed JSON answers 400 with an issue at the root', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await request(t.app).post('/api/labs').set('Cookie', u.cookie).set('Content-Type', 'application/json').send('{"name": "Optics",}')
    expect(res.status).toBe(400)
    expect(res.body).toEqual({ error: 'The request body is not valid JSON.', issues: [{ path: '', message: 'not valid JSON' }] })
  })

  it('a JSON array body where an object is expected answers 400 with the root path', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).post('/api/labs', [1, 2])
    expect(res.status).toBe(400)
    expect(res.body.issues).toEqual([{ path: '', message: expect.any(String) }])
  })
})

describe('rate limits', () => {
  const tight = { windowMs: 60_000, limit: 3 }

  it('POST /api/auth/sign-in answers 429 after too many failures, even for the right password', async () => {
    const t = await makeTestApp({ config: { limits: { signIn: tight, mail: tight, token: tight } } })
    const u = await createTestUser(t)
    for (let i = 0; i < 3; i++) expect((await call(t).post('/api/auth/sign-in', { email: u.email, password: 'wrong password' })).status).toBe(401)
    const blocked = await call(t).post('/api/auth/sign-in', { email: u.email, password: u.password })
    expect(blocked.status).toBe(429)
    expect(blocked.body.error).toBe('Too many failed sign-ins from this address. Wait 1 minute and try again.')
    expect(blocked.headers.ratelimit).toMatch(/r=0/)
  })

  it('POST /api/auth/sign-in does not count successful sign-ins', async () => {
    const t = await makeTestApp({ config: { limits: { signIn: tight, mail: tight, token: tight } } })
    const u = await createTestUser(t)
    for (let i = 0; i < 6; i++) expect((await call(t).post('/api/auth/sign-in', { email: u.email, password: u.password })).status).toBe(200)
  })

  it('POST /api/auth/reset-request answers 429 after the limit and sends no more mail', async () => {
    const t = await makeTestApp({ config: { limits: { signIn: tight, mail: tight, token: tight } } })
    const u = await createTestUser(t)
    for (let i = 0; i < 3; i++) expect((await call(t).post('/api/auth/reset-request', { email: u.email })).status).toBe(202)
    expect((await call(t).post('/api/auth/reset-request', { email: u.email })).status).toBe(429)
    expect((await call(t).post('/api/auth/sign-up', { email: 'x@lab.example', name: 'X', password: 'long enough one' })).status).toBe(429)
    expect(t.mailer.to(u.email)).toHaveLength(3)
  })

  it('POST /api/auth/reset answers 429 after too many wrong tokens', async () => {
    const t = await makeTestApp({ config: { limits: { signIn: tight, mail: tight, token: tight } } })
    for (let i = 0; i < 3; i++) expect((await call(t).post('/api/auth/reset', { token: `${'z'.repeat(42)}${i}`, password: 'the new password' })).status).toBe(404)
    expect((await call(t).post('/api/auth/reset', { token: 'z'.repeat(43), password: 'the new password' })).status).toBe(429)
  })
})

describe('the session cookie', () => {
  async function signInCookie(t: TestApp, headers: Record<string, string> = {}): Promise<string> {
    const u = await createTestUser(t)
    const res = await call(t).post('/api/auth/sign-in', { email: u.email, password: u.password }).set(headers)
    expect(res.status).toBe(200)
    return (res.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('penumbra_session='))!
  }

  it('POST /api/auth/sign-in sets it httpOnly and SameSite=Lax, without Secure over plain http in development', async () => {
    const set = await signInCookie(await makeTestApp())
    expect(set).toMatch(/; HttpOnly/)
    expect(set).toMatch(/; SameSite=Lax/)
    expect(set).not.toMatch(/; Secure/)
  })

  it('POST /api/auth/sign-in marks it Secure when the app is public over https, with HSTS and upgrade-insecure-requests', async () => {
    const t = await makeTestApp({ config: { cookieSecure: true, production: true, publicUrl: 'https://penumbra.halvorsen-lab.example' } })
    const set = await signInCookie(t)
    expect(set).toMatch(/; Secure/)
    expect(set).toMatch(/; HttpOnly/)
    const health = await request(t.app).get('/api/health')
    expect(health.headers['strict-transport-security']).toMatch(/max-age=\d+/)
    expect(health.headers['content-security-policy']).toContain('upgrade-insecure-requests')
  })

  it('POST /api/auth/sign-in marks it Secure behind a trusted TLS proxy, and not for a forwarded header nobody trusts', async () => {
    const proxied = await signInCookie(await makeTestApp({ config: { trustProxy: 1 } }), { 'X-Forwarded-Proto': 'https' })
    expect(proxied).toMatch(/; Secure/)
    const untrusted = await signInCookie(await makeTestApp(), { 'X-Forwarded-Proto': 'https' })
    expect(untrusted).not.toMatch(/; Secure/)
  })

  it('POST /api/auth/sign-out clears it with the same flags', async () => {
    const t = await makeTestApp({ config: { cookieSecure: true } })
    const u = await createTestUser(t)
    const res = await call(t, u.cookie).post('/api/auth/sign-out')
    expect(res.status).toBe(204)
    const cleared = (res.headers['set-cookie'] as unknown as string[])[0]
    expect(cleared).toMatch(/^penumbra_session=;/)
    expect(cleared).toMatch(/; HttpOnly/)
    expect(cleared).toMatch(/; Secure/)
    expect(cleared).toMatch(/; SameSite=Lax/)
    expect(cleared).toMatch(/Expires=Thu, 01 Jan 1970/)
  })
})
