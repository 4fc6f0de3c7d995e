/** Labs and memberships: create, list, rename; members, role changes and removal, always keeping an owner. */
import { and, asc, count, eq, sql } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import { callHook } from '../deps'
import { labs, memberships, sheets, users, type Role } from '../db/tables'
import { conflict, notFound } from '../errors'
import { lockFor, transact } from '../db/transact'
import type { Lab, Member } from '../../shared/schema/api'
import type { LabRow } from '../types'
import { newId } from './tokens'

const ROLE_ORDER = sql<number>`case ${memberships.role} when 'owner' then 0 when 'editor' then 1 when 'reviewer' then 2 else 3 end`

async function counts(deps: Pick<AppDeps, 'db'>, labId: string) {
  const memberCount = (await deps.db.select({ n: count() }).from(memberships).where(eq(memberships.labId, labId)))[0]?.n ?? 0
  const sheetCount = (await deps.db.select({ n: count() }).from(sheets).where(eq(sheets.labId, labId)))[0]?.n ?? 0
  return { memberCount, sheetCount }
}

export async function labReply(deps: Pick<AppDeps, 'db'>, lab: LabRow, role: Role): Promise<Lab> {
  return { id: lab.id, name: lab.name, role, createdAt: lab.createdAt, ...(await counts(deps, lab.id)) }
}

export async function labById(deps: Pick<AppDeps, 'db'>, labId: string): Promise<LabRow | undefined> {
  return (await deps.db.select().from(labs).where(eq(labs.id, labId)))[0]
}

export async function listLabs(deps: Pick<AppDeps, 'db'>, userId: string): Promise<Lab[]> {
  const rows = await deps.db
    .select({ lab: labs, role: memberships.role })
    .from(memberships)
    .innerJoin(labs, eq(labs.id, memberships.labId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(labs.name), asc(labs.createdAt))
  return Promise.all(rows.map((r) => labReply(deps, r.lab, r.role)))
}

export async function createLab(deps: Pick<AppDeps, 'db'>, userId: string, name: string): Promise<Lab> {
  const now = Date.now()
  const lab: LabRow = { id: newId(), name, createdBy: userId, createdAt: now }
  await transact(deps.db, async (db) => {
    await db.insert(labs).values(lab)
    await db.insert(memberships).values({ labId: lab.id, userId, role: 'owner', createdAt: now })
  })
  return labReply(deps, lab, 'owner')
}

export async function renameLab(deps: Pick<AppDeps, 'db'>, lab: LabRow, role: Role, name: string): Promise<Lab> {
  await deps.db.update(labs).set({ name }).where(eq(labs.id, lab.id))
  return labReply(deps, { ...lab, name }, role)
}

export async function listMembers(deps: Pick<AppDeps, 'db'>, labId: string): Promise<Member[]> {
  return deps.db
    .select({ userId: users.id, name: users.name, email: users.email, role: memberships.role, joinedAt: memberships.createdAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.labId, labId))
    .orderBy(ROLE_ORDER, asc(users.name))
}

async function memberRow(deps: Pick<AppDeps, 'db'>, labId: string, userId: string): Promise<Member | undefined> {
  return (await listMembers(deps, labId)).find((m) => m.userId === userId)
}

async function ownerCount(deps: Pick<AppDeps, 'db'>, labId: string): Promise<number> {
  return (await deps.db.select({ n: count() }).from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.role, 'owner'))))[0]?.n ?? 0
}

const LAST_OWNER = 'A lab always keeps at least one owner: make another member owner first.'

export async function changeRole(deps: AppDeps, labId: string, userId: string, role: Role): Promise<Member> {
  const updated = await transact(deps.db, async (db) => {
    await lockFor(db, `lab-owners:${labId}`)
    const member = await memberRow({ db }, labId, userId)
    if (!member) throw notFound('That person is not a member of this lab.')
    if (member.role === role) return { member, changed: false }
    if (member.role === 'owner' && (await ownerCount({ db }, labId)) <= 1) throw conflict(LAST_OWNER)
    await db.update(memberships).set({ role }).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)))
    return { member: { ...member, role }, changed: true }
  })
  if (updated.changed) callHook(deps, 'membershipChanged', labId, userId)
  return updated.member
}

/** Removes a member (an owner removing someone, or anyone leaving). */
export async function removeMember(deps: AppDeps, labId: string, userId: string): Promise<void> {
  await transact(deps.db, async (db) => {
    await lockFor(db, `lab-owners:${labId}`)
    const member = await memberRow({ db }, labId, userId)
    if (!member) throw notFound('That person is not a member of this lab.')
    if (member.role === 'owner' && (await ownerCount({ db }, labId)) <= 1) throw conflict(LAST_OWNER)
    await db.delete(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)))
  })
  callHook(deps, 'membershipChanged', labId, userId)
}
