/** Mail: nodemailer over real SMTP into the local fake server, the developer mailbox, and the outgoing mail log. */
import { afterEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createApp } from '../../server/app'
import { defaultConfig } from '../../server/config'
import { openTestDb } from '../utils/db'
import { mails } from '../../server/db/tables'
import { createDevMailer, type Mailer } from '../../server/mail/mailer'
import { decodeEncodedWords, decodeQuotedPrintable, linksIn } from '../../server/mail/mime'
import { call, createTestUser, makeTestApp, seedLab, TEST_ARGON2 } from '../utils/server'
import { CSRF_HEADER } from '../../shared/schema/api'

const open: Mailer[] = []
afterEach(async () => {
  await Promise.all(open.splice(0).map((m) => m.close()))
})

async function waitFor<T>(get: () => T | undefined | Promise<T | undefined>, what: string): Promise<T> {
  for (let i = 0; i < 200; i++) {
    const v = await get()
    if (v !== undefined) return v
    await new Promise((r) => setTimeout(r, 10))
  }
  throw new Error(`timed out waiting for ${what}`)
}

describe('createDevMailer', () => {
  it('delivers over SMTP to the local fake, which keeps the text and HTML parts, subject and links', async () => {
    const mailer = await createDevMailer('Penumbra <no-reply@penumbra.localhost>')
    open.push(mailer)
    expect(mailer.fake.host).toBe('127.0.0.1')
    const long = 'α absorption coefficient in 1/cm — '.repeat(6)
    await mailer.send({
      to: 'tomas@halvorsen-lab.example',
      subject: 'Tomás, a review is waiting · Film H-17',
      text: `Hello Tomás,\n${long}\nOpen https://penumbra.test/sheets/abc?x=1 now.`,
      html: '<p>Hello <strong>Tomás</strong>, <a href="https://penumbra.test/sheets/abc?x=1">open</a></p>',
    })
    const [m] = mailer.inbox!()
    expect(m.subject).toBe('Tomás, a review is waiting · Film H-17')
    expect(m.to).toEqual(['tomas@halvorsen-lab.example'])
    expect(m.from).toBe('Penumbra <no-reply@penumbra.localhost>')
    expect(m.text).toBe(`Hello Tomás,\n${long}\nOpen https://penumbra.test/sheets/abc?x=1 now.`)
    expect(m.html).toBe('<p>Hello <strong>Tomás</strong>, <a href="https://penumbra.test/sheets/abc?x=1">open</a></p>')
    expect(m.links).toEqual(['https://penumbra.test/sheets/abc?x=1'])
  })
})

describe('mime helpers', () => {
  it('decodeQuotedPrintable(s) joins soft line breaks and decodes UTF-8 bytes (RFC 2045 §6.7)', () => {
    expect(decodeQuotedPrintable('Tom=C3=A1s and a long=\r\n line')).toBe('Tomás and a long line')
  })
  it('decodeEncodedWords(s) reads Q and B encoded words (RFC 2047)', () => {
    expect(decodeEncodedWords('=?UTF-8?Q?Tom=C3=A1s_Reyes?= <t@x.example>')).toBe('Tomás Reyes <t@x.example>')
    expect(decodeEncodedWords('=?UTF-8?B?VG9tw6Fz?=')).toBe('Tomás')
  })
  it('linksIn(text) lists each http(s) link once, without trailing punctuation', () => {
    expect(linksIn('See https://a.example/x. And http://b.example/y, then https://a.example/x')).toEqual(['https://a.example/x', 'http://b.example/y'])
  })
})

describe('GET /dev/mail and /dev/mail.json', () => {
  it('list an invitation that went through real SMTP, with its accept link, which works', async () => {
    const handle = await openTestDb()
    const mailer = await createDevMailer('Penumbra <no-reply@penumbra.localhost>')
    open.push(mailer)
    const config = defaultConfig({ publicUrl: 'http://penumbra.test', argon2: TEST_ARGON2 })
    const deps = { db: handle.db, secret: new TextEncoder().encode('x'.repeat(40)), mailer, config }
    const t = { app: createApp(deps), db: handle.db, secret: deps.secret, deps }
    const lab = await seedLab(t)
    await request(t.app).post(`/api/labs/${lab.labId}/invitations`).set('Cookie', lab.users.owner.cookie).set(CSRF_HEADER, '1').send({ email: 'new@elsewhere.example', role: 'editor' })
    const listed = await waitFor(() => (mailer.inbox!().length > 0 ? mailer.inbox!() : undefined), 'the invitation to arrive')
    const res = await request(t.app).get('/dev/mail.json')
    expect(res.status).toBe(200)
    expect(res.body.messages).toHaveLength(1)
    const m = res.body.messages[0]
    expect(m).toMatchObject({ to: ['new@elsewhere.example'], subject: `The owner invites you to ${lab.labName} on Penumbra` })
    expect(m).toEqual(listed[0])
    expect(m.links).toHaveLength(1)
    expect(m.links[0]).toMatch(/^http:\/\/penumbra\.test\/invitations\//)
    const page = await request(t.app).get('/dev/mail')
    expect(page.headers['content-type']).toMatch(/^text\/html/)
    expect(page.text).toContain('Developer mailbox')
    expect(page.text).toContain(m.links[0])
    const token = decodeURIComponent(new URL(m.links[0]).pathname.split('/').pop()!)
    const accepted = await request(t.app).post(`/api/invitations/${token}/accept`).set(CSRF_HEADER, '1').send({ name: 'New Person', password: 'new person password' })
    expect(accepted.status).toBe(200)
    expect(accepted.body.role).toBe('editor')
    // the log records the send
    await waitFor(async () => (await handle.db.select().from(mails)).find((r) => r.sentAt != null), 'sentAt to be recorded')
    await handle.close()
  }, 20000)
})

describe('the outgoing mail log', () => {
  it('records every mail, and a transport failure without failing the request', async () => {
    const t = await makeTestApp()
    const u = await createTestUser(t)
    t.mailer.failWith = 'connection refused'
    expect((await call(t).post('/api/auth/reset-request', { email: u.email })).status).toBe(202)
    const row = await waitFor(async () => (await t.db.select().from(mails)).find((r) => r.error != null), 'the error to be recorded')
    expect(row).toMatchObject({ to: u.email, kind: 'password-reset', subject: 'Choose a new Penumbra password', error: 'connection refused', sentAt: null })
    expect(row.text).toContain('/reset/')
    expect(row.html).toContain('<!doctype html>')
  })
})
