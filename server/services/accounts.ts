/**
 * Accounts: sign-up confirmed by a mailed link, sign-in, profile, password change and reset by a mailed single-use
 * link. No answer here depends on whether an address has an account, except to the holder of a mailed token.
 */
import { and, eq, isNull } from 'drizzle-orm'
import { callHook, type AppDeps } from '../deps'
import type { Db } from '../db/client'
import type { AppConfig } from '../config'
import { pendingSignups, passwordResets, users } from '../db/tables'
import { transact } from '../db/transact'
import { conflict, forbidden, gone, notFound } from '../errors'
import { alreadySignedUpMail, confirmSignUpMail, passwordResetMail } from '../mail/messages'
import { MAIL_LINK_ROUTES, type SignUpBody, type User } from '../../shared/schema/api'
import { hashPassword, verifyAgainstDummy, verifyPassword } from './passwords'
import { queueMail } from './mail'
import { hashToken, newId, newToken } from './tokens'

export type UserRow = typeof users.$inferSelect

export function publicUser(u: Pick<UserRow, 'id' | 'email' | 'name'>): User {
  return { id: u.id, email: u.email, name: u.name }
}

export async function userByEmail(deps: Pick<AppDeps, 'db'>, email: string): Promise<UserRow | undefined> {
  return (await deps.db.select().from(users).where(eq(users.email, email.toLowerCase())))[0]
}

export async function userById(deps: Pick<AppDeps, 'db'>, id: string): Promise<UserRow | undefined> {
  return (await deps.db.select().from(users).where(eq(users.id, id)))[0]
}

/** `/confirm/:token` → `https://host/confirm/<token>` */
export function linkTo(deps: Pick<AppDeps, 'config'>, route: string, token?: string): string {
  return deps.config.publicUrl + (token === undefined ? route : route.replace(':token', encodeURIComponent(token)))
}

/** Creates a user directly (seed, tests, accepting an invitation with a new account). */
export async function createUser(deps: { db: Db; config: Pick<AppConfig, 'argon2'> }, o: { email: string; name: string; password: string }): Promise<UserRow> {
  const row: UserRow = {
    id: newId(),
    email: o.email.toLowerCase(),
    name: o.name,
    passwordHash: await hashPassword(deps.config, o.password),
    createdAt: Date.now(),
    sessionsValidFrom: null,
  }
  await deps.db.insert(users).values(row)
  return row
}

/** Same work and the same answer whether or not the address has an account; the mail says which. */
export async function requestSignUp(deps: AppDeps, body: SignUpBody): Promise<void> {
  const passwordHash = await hashPassword(deps.config, body.password)
  const existing = await userByEmail(deps, body.email)
  if (existing) {
    await queueMail(deps, 'already-signed-up', existing.email, alreadySignedUpMail({
      name: existing.name,
      signInLink: linkTo(deps, MAIL_LINK_ROUTES.signIn),
      resetLink: linkTo(deps, MAIL_LINK_ROUTES.requestReset),
    }))
    return
  }
  const { token, hash } = newToken()
  const now = Date.now()
  const expiresAt = now + deps.config.ttl.signupMs
  await deps.db.insert(pendingSignups).values({ id: newId(), email: body.email, name: body.name, passwordHash, tokenHash: hash, createdAt: now, expiresAt })
  await queueMail(deps, 'confirm-sign-up', body.email, confirmSignUpMail({ name: body.name, link: linkTo(deps, MAIL_LINK_ROUTES.confirmSignUp, token), expiresAt }))
}

/** Opens a confirmation link: creates the account. */
/**
 * Finishes a sign-up from its mailed link. The password chosen at sign-up must be given again: the link alone is
 * not enough, so an account can't be created for an address by someone who doesn't read its mail, nor handed to
 * its owner with a stranger's password. A wrong password leaves the link usable.
 */
export async function confirmSignUp(deps: AppDeps, token: string, password: string): Promise<UserRow> {
  const [row] = await deps.db.select().from(pendingSignups).where(eq(pendingSignups.tokenHash, hashToken(token)))
  if (!row) throw notFound('This confirmation link is not valid. Sign up again to get a new one.')
  if (row.usedAt != null) throw gone('This confirmation link has already been used. Sign in with your e-mail and password.')
  if (row.expiresAt <= Date.now()) throw gone('This confirmation link has expired. Sign up again to get a new one.')
  if (!(await verifyPassword(row.passwordHash, password)))
    throw forbidden('That is not the password chosen when signing up. If you did not sign up for Penumbra yourself, ignore the e-mail: no account is made.')
  return transact(deps.db, async (db) => {
    await db.update(pendingSignups).set({ usedAt: Date.now() }).where(eq(pendingSignups.id, row.id))
    if (await userByEmail({ db }, row.email)) throw conflict('An account with this e-mail address already exists. Sign in instead.')
    const user: UserRow = { id: newId(), email: row.email, name: row.name, passwordHash: row.passwordHash, createdAt: Date.now(), sessionsValidFrom: null }
    await db.insert(users).values(user)
    return user
  })
}

/** The user for an e-mail and password, or null; takes the same time when the address has no account. */
export async function checkCredentials(deps: AppDeps, email: string, password: string): Promise<UserRow | null> {
  const user = await userByEmail(deps, email)
  if (!user) return verifyAgainstDummy(deps.config, password).then(() => null)
  return (await verifyPassword(user.passwordHash, password)) ? user : null
}

export async function updateName(deps: AppDeps, userId: string, name: string): Promise<UserRow> {
  await deps.db.update(users).set({ name }).where(eq(users.id, userId))
  return (await userById(deps, userId))!
}

/** Sets a new password and ends every session issued before now. */
async function setPassword(deps: AppDeps, userId: string, password: string): Promise<void> {
  const passwordHash = await hashPassword(deps.config, password)
  await deps.db.update(users).set({ passwordHash, sessionsValidFrom: Date.now() }).where(eq(users.id, userId))
  callHook(deps, 'sessionsEnded', userId)
}

export async function changePassword(deps: AppDeps, userId: string, current: string, next: string): Promise<void> {
  const user = await userById(deps, userId)
  if (!user || !(await verifyPassword(user.passwordHash, current))) throw forbidden('The current password is not right.')
  await setPassword(deps, userId, next)
}

/** Mails a reset link when the address has an account; otherwise does nothing visible. */
export async function requestReset(deps: AppDeps, email: string): Promise<void> {
  const user = await userByEmail(deps, email)
  const { token, hash } = newToken()
  if (!user) return
  const now = Date.now()
  const expiresAt = now + deps.config.ttl.resetMs
  await deps.db.insert(passwordResets).values({ id: newId(), userId: user.id, tokenHash: hash, createdAt: now, expiresAt })
  await queueMail(deps, 'password-reset', user.email, passwordResetMail({ name: user.name, link: linkTo(deps, MAIL_LINK_ROUTES.resetPassword, token), expiresAt }))
}

/** Uses a reset link once: sets the password, spends every other open link of that user, ends older sessions. */
export async function resetPassword(deps: AppDeps, token: string, password: string): Promise<void> {
  const [row] = await deps.db.select().from(passwordResets).where(eq(passwordResets.tokenHash, hashToken(token)))
  if (!row) throw notFound('This reset link is not valid. Ask for a new one.')
  if (row.usedAt != null) throw gone('This reset link has already been used. Ask for a new one if you need to.')
  if (row.expiresAt <= Date.now()) throw gone('This reset link has expired. Ask for a new one.')
  // spend the link before the slow hash, so two requests with one link cannot both succeed
  await deps.db.update(passwordResets).set({ usedAt: Date.now() }).where(and(eq(passwordResets.userId, row.userId), isNull(passwordResets.usedAt)))
  await setPassword(deps, row.userId, password)
}
