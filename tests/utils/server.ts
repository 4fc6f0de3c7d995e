/**
 * Test factories for the API: an app over an in-memory database with a fake mailer, quick users and sessions, and a
 * lab seeded with the four roles plus an outsider. Requests go through Supertest against createApp (no port).
 */
import request from 'supertest'
import type { Express } from 'express'
import { createApp } from '../../server/app'
import { defaultConfig, type AppConfig } from '../../server/config'
import type { AnyDbHandle, Db } from '../../server/db/client'
import { openTestDb } from './db'
import { labs, memberships, users, type Role } from '../../server/db/tables'
import type { Mailer, OutgoingMail } from '../../server/mail/mailer'
import { hashPassword } from '../../server/services/passwords'
import { SESSION_COOKIE, signSession } from '../../server/services/sessions'
import { createSheet, blankSheetFile } from '../../server/services/sheets'
import { newId } from '../../server/services/tokens'
import { linksIn } from '../../server/mail/mime'
import { CSRF_HEADER } from '../../shared/schema/api'
import type { AppDeps, AppHooks } from '../../server/deps'

export interface SentMail extends OutgoingMail {
  at: number
  links: string[]
}

export interface FakeMailer extends Mailer {
  sent: SentMail[]
  /** Mails to one address, oldest first. */
  to(email: string): SentMail[]
  /** The token of the newest link to `email` whose path starts with `prefix` (e.g. '/reset/'). */
  tokenFor(email: string, prefix: string): string
  /** Make the next sends fail with this message (null: succeed again). */
  failWith: string | null
}

/** A mailer that keeps what it is given; it records synchronously when `send` is called. */
export function fakeMailer(): FakeMailer {
  const sent: SentMail[] = []
  const mailer: FakeMailer = {
    sent,
    failWith: null,
    send(mail) {
      if (mailer.failWith) return Promise.reject(new Error(mailer.failWith))
      sent.push({ ...mail, at: Date.now(), links: linksIn(mail.text) })
      return Promise.resolve()
    },
    inbox: () =>
      [...sent].reverse().map((m, i) => ({ id: String(i), from: 'test', to: [m.to], subject: m.subject, receivedAt: m.at, text: m.text, html: m.html, links: m.links })),
    close: () => Promise.resolve(),
    to: (email) => sent.filter((m) => m.to === email),
    tokenFor(email, prefix) {
      const mails = mailer.to(email)
      for (let i = mails.length - 1; i >= 0; i--)
        for (const link of mails[i].links) {
          const path = new URL(link).pathname
          if (path.startsWith(prefix)) return decodeURIComponent(path.slice(prefix.length))
        }
      throw new Error(`no ${prefix} link mailed to ${email} (mails: ${mails.map((m) => m.subject).join(', ') || 'none'})`)
    },
  }
  return mailer
}

export interface HookCall {
  hook: keyof AppHooks
  args: string[]
}

export interface TestApp {
  app: Express
  db: Db
  handle: AnyDbHandle
  secret: Uint8Array
  mailer: FakeMailer
  config: AppConfig
  deps: AppDeps
  /** Every hook call, in order. */
  hookCalls: HookCall[]
  close(): void | Promise<void>
}

/** Cheap argon2 settings for tests (production uses OWASP's minimum). */
export const TEST_ARGON2 = { memoryCost: 1024, timeCost: 1 }
/** Limits high enough that only the rate-limit tests meet them. */
const TEST_LIMITS = { windowMs: 60_000, limit: 10_000 }

/** An app over a fresh database (SQLite in memory; a new PostgreSQL database under DATABASE_URL). */
export async function makeTestApp(options: { config?: Partial<AppConfig>; secret?: Uint8Array } = {}): Promise<TestApp> {
  const handle = await openTestDb()
  const mailer = fakeMailer()
  const config = defaultConfig({
    publicUrl: 'http://penumbra.test',
    argon2: TEST_ARGON2,
    limits: { signIn: TEST_LIMITS, mail: TEST_LIMITS, token: TEST_LIMITS },
    ...options.config,
  })
  const secret = options.secret ?? new TextEncoder().encode('test-secret-0123456789-abcdefghijklmnop')
  const hookCalls: HookCall[] = []
  const hooks: AppHooks = {
    membershipChanged: (labId, userId) => void hookCalls.push({ hook: 'membershipChanged', args: [labId, userId] }),
    sheetDeleted: (sheetId) => void hookCalls.push({ hook: 'sheetDeleted', args: [sheetId] }),
    sessionsEnded: (userId) => void hookCalls.push({ hook: 'sessionsEnded', args: [userId] }),
  }
  const deps: AppDeps = { db: handle.db, secret, mailer, config, hooks }
  return { app: createApp(deps), db: handle.db, handle, secret, mailer, config, deps, hookCalls, close: () => handle.close() }
}

let passwordHash: Promise<string> | null = null
/** The password every factory-made user has. */
export const TEST_PASSWORD = 'correct horse battery'

export interface TestUser {
  id: string
  email: string
  name: string
  password: string
  /** A `Cookie` header value for a fresh session of this user. */
  cookie: string
}

/** Inserts a user directly (no mail round trip) and signs a session for it. */
export async function createTestUser(t: Pick<TestApp, 'db' | 'secret'>, o: { email?: string; name?: string } = {}): Promise<TestUser> {
  passwordHash ??= hashPassword({ argon2: TEST_ARGON2 }, TEST_PASSWORD)
  const id = newId()
  const email = (o.email ?? `user-${id.slice(0, 8)}@lab.example`).toLowerCase()
  const name = o.name ?? `User ${id.slice(0, 4)}`
  await t.db.insert(users).values({ id, email, name, passwordHash: await passwordHash, createdAt: Date.now() })
  return { id, email, name, password: TEST_PASSWORD, cookie: await sessionCookie(t, id) }
}

/** A `Cookie` header for a new session of `userId` (optionally with another ttl or secret). */
export async function sessionCookie(t: Pick<TestApp, 'secret'>, userId: string, o: { ttlSeconds?: number; secret?: Uint8Array } = {}): Promise<string> {
  const { token } = await signSession(o.secret ?? t.secret, userId, o.ttlSeconds)
  return `${SESSION_COOKIE}=${token}`
}

/** The session cookie a response set, as a `Cookie` header value. */
export function cookieFrom(res: request.Response): string {
  const set = res.headers['set-cookie'] as unknown as string[] | undefined
  const found = set?.find((c) => c.startsWith(`${SESSION_COOKIE}=`))
  if (!found) throw new Error(`no session cookie in the reply (status ${res.status})`)
  return found.split(';')[0]
}

/** Signs in over HTTP and returns the session cookie. */
export async function signIn(t: TestApp, email: string, password: string): Promise<string> {
  const res = await call(t).post('/api/auth/sign-in', { email, password })
  if (res.status !== 200) throw new Error(`sign-in failed: ${res.status} ${JSON.stringify(res.body)}`)
  return cookieFrom(res)
}

/** Signs up over HTTP, opens the mailed confirmation link, and returns the user and cookie. */
export async function signUp(t: TestApp, o: { email: string; name: string; password: string }): Promise<{ user: { id: string; email: string; name: string }; cookie: string }> {
  const res = await call(t).post('/api/auth/sign-up', o)
  if (res.status !== 201) throw new Error(`sign-up failed: ${res.status} ${JSON.stringify(res.body)}`)
  const token = t.mailer.tokenFor(o.email.toLowerCase(), '/confirm/')
  const confirmed = await call(t).post('/api/auth/confirm', { token, password: o.password })
  if (confirmed.status !== 200) throw new Error(`confirm failed: ${confirmed.status} ${JSON.stringify(confirmed.body)}`)
  return { user: confirmed.body.user, cookie: cookieFrom(confirmed) }
}

/** Requests as our own client sends them: the CSRF header on state-changing ones, the cookie when given. */
export function call(t: Pick<TestApp, 'app'>, cookie?: string) {
  const agent = request(t.app)
  const prep = (r: request.Test) => (cookie ? r.set('Cookie', cookie) : r)
  return {
    get: (path: string) => prep(agent.get(path)),
    post: (path: string, body?: object) => {
      const r = prep(agent.post(path).set(CSRF_HEADER, '1'))
      return body === undefined ? r : r.send(body)
    },
    patch: (path: string, body?: object) => {
      const r = prep(agent.patch(path).set(CSRF_HEADER, '1'))
      return body === undefined ? r : r.send(body)
    },
    del: (path: string) => prep(agent.delete(path).set(CSRF_HEADER, '1')),
  }
}

export type Caller = Role | 'outsider' | 'anonymous'
export const CALLERS: readonly Caller[] = ['owner', 'editor', 'reviewer', 'viewer', 'outsider', 'anonymous']

export interface SeededLab {
  labId: string
  labName: string
  users: Record<Role | 'outsider', TestUser>
  /** A second viewer, to be removed or re-roled by others. */
  extra: TestUser
  /** A sheet the editor made, and one the owner made. */
  editorSheetId: string
  ownerSheetId: string
  /** The Cookie header for a caller ('' for anonymous). */
  cookie(caller: Caller): string
}

/** A lab with one member of each role (plus a second viewer), an outsider with an account, and two sheets. */
export async function seedLab(t: Pick<TestApp, 'db' | 'secret' | 'deps'>, labName = 'Sample Lab'): Promise<SeededLab> {
  const roles: Role[] = ['owner', 'editor', 'reviewer', 'viewer']
  const made = {} as Record<Role | 'outsider', TestUser>
  for (const r of [...roles, 'outsider' as const]) made[r] = await createTestUser(t, { email: `${r}@${labName.toLowerCase().replace(/\W+/g, '-')}.example`, name: `The ${r}` })
  const extra = await createTestUser(t, { name: 'Second viewer' })
  const labId = newId()
  const now = Date.now()
  await t.db.insert(labs).values({ id: labId, name: labName, createdBy: made.owner.id, createdAt: now })
  for (const r of roles) await t.db.insert(memberships).values({ labId, userId: made[r].id, role: r, createdAt: now })
  await t.db.insert(memberships).values({ labId, userId: extra.id, role: 'viewer', createdAt: now })
  const editorSheet = await createSheet(t.deps, labId, made.editor.id, blankSheetFile('Editor sheet'))
  const ownerSheet = await createSheet(t.deps, labId, made.owner.id, blankSheetFile('Owner sheet'))
  return {
    labId,
    labName,
    users: made,
    extra,
    editorSheetId: editorSheet.id,
    ownerSheetId: ownerSheet.id,
    cookie: (caller) => (caller === 'anonymous' ? '' : made[caller].cookie),
  }
}
