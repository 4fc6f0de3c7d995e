// What a development server shows to the network: it listens on 127.0.0.1 unless HOST says otherwise, and its
// mailbox of sign-up, reset and invitation links answers in full only on this machine.
import { describe, expect, it } from 'vitest'
import request from 'supertest'
import { listenHost } from '../../server/index'
import { call, createTestUser, makeTestApp } from '../utils/server'

describe('listenHost', () => {
  it('is 127.0.0.1 outside production, every interface in production, and HOST when set', () => {
    expect(listenHost({ NODE_ENV: 'development' })).toBe('127.0.0.1')
    expect(listenHost({})).toBe('127.0.0.1')
    expect(listenHost({ NODE_ENV: 'production' })).toBeUndefined()
    expect(listenHost({ NODE_ENV: 'development', HOST: '0.0.0.0' })).toBe('0.0.0.0')
    expect(listenHost({ NODE_ENV: 'production', HOST: '10.0.0.5' })).toBe('10.0.0.5')
  })
})

describe('GET /dev/mail.json from elsewhere', () => {
  // TRUST_PROXY=1 (one proxy in front), so the forwarded address is the caller's
  const remote = '203.0.113.7'

  it('answers 403 to a request from another machine that is not signed in (JSON and the page)', async () => {
    const t = await makeTestApp({ config: { trustProxy: 1 } })
    await createTestUser(t, { email: 'someone@lab.example' })
    for (const path of ['/dev/mail.json', '/dev/mail']) {
      const res = await request(t.app).get(path).set('X-Forwarded-For', remote)
      expect(res.status).toBe(403)
      expect(res.body.error, `${path}: ${res.status} ${res.text.slice(0, 200)}`).toMatch(/answers only on this machine/)
    }
  })

  it('shows a signed-in person from another machine only the mail sent to their own address', async () => {
    const t = await makeTestApp({ config: { trustProxy: 1 } })
    const a = await createTestUser(t, { email: 'ana@lab.example' })
    await createTestUser(t, { email: 'bo@lab.example' })
    await call(t).post('/api/auth/reset-request', { email: 'ana@lab.example' })
    await call(t).post('/api/auth/reset-request', { email: 'bo@lab.example' })
    const all = await request(t.app).get('/dev/mail.json')
    expect(all.status).toBe(200)
    const mine = await request(t.app).get('/dev/mail.json').set('X-Forwarded-For', remote).set('Cookie', a.cookie)
    expect(mine.status).toBe(200)
    expect(mine.body.messages.length).toBeGreaterThan(0)
    expect(mine.body.messages.length).toBeLessThan(all.body.messages.length)
    expect(mine.body.messages.every((m: { to: string[] }) => m.to.includes('ana@lab.example'))).toBe(true)
  })

  it('answers a request from this machine in full', async () => {
    const t = await makeTestApp({ config: { trustProxy: 1 } })
    const res = await request(t.app).get('/dev/mail.json').set('X-Forwarded-For', '127.0.0.1')
    expect(res.status).toBe(200)
  })
})
