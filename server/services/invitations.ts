/**
 * Invitations: an owner invites an address with a role; the mailed link (single use, expiring) lets the holder
 * join with the account they are signed in with, or create the invited address's account on the spot.
 */
import { and, asc, eq, gt, isNull } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import { callHook } from '../deps'
import { invitations, labs, memberships, type Role } from '../db/tables'
import { conflict, forbidden, gone, notFound } from '../errors'
import { invitationMail } from '../mail/messages'
import { MAIL_LINK_ROUTES, type Invitation, type InvitationPreview } from '../../shared/schema/api'
import type { LabRow } from '../types'
import { createUser, linkTo, userByEmail, userById, type UserRow } from './accounts'
import { queueMail } from './mail'
import { lockFor, transact } from '../db/transact'
import { hashToken, newId, newToken } from './tokens'

type InvitationRow = typeof invitations.$inferSelect

async function toInvitation(deps: Pick<AppDeps, 'db'>, row: InvitationRow): Promise<Invitation> {
  const inviter = await userById(deps, row.invitedBy)
  return { id: row.id, email: row.email, role: row.role, invitedBy: inviter?.name ?? 'a former member', createdAt: row.createdAt, expiresAt: row.expiresAt }
}

async function isMember(deps: Pick<AppDeps, 'db'>, labId: string, userId: string): Promise<boolean> {
  const [row] = await deps.db.select({ role: memberships.role }).from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)))
  return !!row
}

/** Pending (unused, unexpired) invitations of a lab, newest first. */
export async function listInvitations(deps: Pick<AppDeps, 'db'>, labId: string): Promise<Invitation[]> {
  const rows = await deps.db
    .select()
    .from(invitations)
    .where(and(eq(invitations.labId, labId), isNull(invitations.acceptedAt), gt(invitations.expiresAt, Date.now())))
    .orderBy(asc(invitations.email))
  return Promise.all(rows.map((r) => toInvitation(deps, r)))
}

export async function createInvitation(deps: AppDeps, lab: LabRow, inviter: { id: string; name: string }, email: string, role: Role): Promise<Invitation> {
  const existing = await userByEmail(deps, email)
  if (existing && (await isMember(deps, lab.id, existing.id))) throw conflict(`${email} is already a member of this lab.`)
  const { token, hash } = newToken()
  const now = Date.now()
  const row: InvitationRow = {
    id: newId(), labId: lab.id, email, role, tokenHash: hash, invitedBy: inviter.id,
    createdAt: now, expiresAt: now + deps.config.ttl.invitationMs, acceptedAt: null, acceptedBy: null,
  }
  await transact(deps.db, async (db) => {
    // a newer invitation to the same address replaces the pending one
    await db.delete(invitations).where(and(eq(invitations.labId, lab.id), eq(invitations.email, email), isNull(invitations.acceptedAt)))
    await db.insert(invitations).values(row)
  })
  await queueMail(deps, 'invitation', email, invitationMail({
    labName: lab.name, role, inviterName: inviter.name, link: linkTo(deps, MAIL_LINK_ROUTES.acceptInvitation, token), expiresAt: row.expiresAt,
  }))
  return toInvitation(deps, row)
}

export async function revokeInvitation(deps: Pick<AppDeps, 'db'>, labId: string, invitationId: string): Promise<void> {
  const removed = await deps.db
    .delete(invitations)
    .where(and(eq(invitations.id, invitationId), eq(invitations.labId, labId), isNull(invitations.acceptedAt)))
    .returning({ id: invitations.id })
  if (removed.length === 0) throw notFound('No such pending invitation in this lab.')
}

/** The invitation behind a link, or the reason it cannot be used. */
async function usableInvitation(deps: Pick<AppDeps, 'db'>, token: string): Promise<{ invitation: InvitationRow; lab: LabRow }> {
  const [invitation] = await deps.db.select().from(invitations).where(eq(invitations.tokenHash, hashToken(token)))
  const lab = invitation && (await deps.db.select().from(labs).where(eq(labs.id, invitation.labId)))[0]
  if (!invitation || !lab) throw notFound('This invitation link is not valid. Ask the lab’s owner for a new one.')
  if (invitation.acceptedAt != null) throw gone('This invitation has already been used. Ask the lab’s owner for a new one if you need it.')
  if (invitation.expiresAt <= Date.now()) throw gone('This invitation has expired. Ask the lab’s owner for a new one.')
  return { invitation, lab }
}

export async function previewInvitation(deps: Pick<AppDeps, 'db'>, token: string, signedIn: boolean): Promise<InvitationPreview> {
  const { invitation, lab } = await usableInvitation(deps, token)
  return {
    labName: lab.name,
    role: invitation.role,
    email: invitation.email,
    invitedBy: (await userById(deps, invitation.invitedBy))?.name ?? 'a former member',
    expiresAt: invitation.expiresAt,
    accountExists: !!(await userByEmail(deps, invitation.email)),
    signedIn,
  }
}

/**
 * Accepts an invitation for `user` (signed in), or — with `newAccount` — creates the invited address's account
 * first. Returns the member and whether an account was created.
 */
export async function acceptInvitation(
  deps: AppDeps,
  token: string,
  who: { user: { id: string } } | { newAccount: { name: string; password: string } },
): Promise<{ lab: LabRow; role: Role; user: UserRow; created: boolean }> {
  let { invitation, lab } = await usableInvitation(deps, token)
  let user: UserRow
  let created = false
  if ('user' in who) {
    const found = await userById(deps, who.user.id)
    if (!found) throw notFound('Your account no longer exists.')
    // a forwarded or leaked link gives nobody else a role: only the invited address's account may accept
    if (found.email.toLowerCase() !== invitation.email.toLowerCase())
      throw forbidden(`This invitation was sent to ${invitation.email}, and you are signed in as ${found.email}. Sign out, then sign in with ${invitation.email} (or create its account) to accept it.`)
    user = found
  } else {
    if (await userByEmail(deps, invitation.email)) throw conflict('An account with this e-mail address already exists. Sign in, then accept the invitation.')
    user = await createUser(deps, { email: invitation.email, name: who.newAccount.name, password: who.newAccount.password })
    created = true
    // the slow hash yielded the event loop: the link may have been used meanwhile
    ;({ invitation, lab } = await usableInvitation(deps, token))
  }
  await transact(deps.db, async (db) => {
    await lockFor(db, `lab-members:${lab.id}:${user.id}`)
    if (await isMember({ db }, lab.id, user.id)) throw conflict(`You are already a member of ${lab.name}.`)
    // taken only if still unused: of two simultaneous accepts (two instances, say) exactly one gets it
    const taken = await db
      .update(invitations)
      .set({ acceptedAt: Date.now(), acceptedBy: user.id })
      .where(and(eq(invitations.id, invitation.id), isNull(invitations.acceptedAt)))
      .returning({ id: invitations.id })
    if (taken.length === 0) throw gone('This invitation has already been used. Ask the lab’s owner for a new one if you need it.')
    await db.insert(memberships).values({ labId: lab.id, userId: user.id, role: invitation.role, createdAt: Date.now() })
  })
  callHook(deps, 'membershipChanged', lab.id, user.id)
  return { lab, role: invitation.role, user, created }
}

