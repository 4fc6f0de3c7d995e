/** Labs and memberships: create, list, rename; members, role changes and removal, always keeping an owner. */
import { and, asc, count, eq, sql } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import { callHook } from '../deps'
import { labs, memberships, sheets, users, type Role } from '../db/schema'
import { conflict, notFound } from '../errors'
import type { Lab, Member } from '../../shared/schema/api'
import type { LabRow } from '../types'
import { newId } from './tokens'

const ROLE_ORDER = sql<number>`case ${memberships.role} when 'owner' then 0 when 'editor' then 1 when 'reviewer' then 2 else 3 end`

function counts(deps: Pick<AppDeps, 'db'>, labId: string) {
  const memberCount = deps.db.select({ n: count() }).from(memberships).where(eq(memberships.labId, labId)).get()?.n ?? 0
  const sheetCount = deps.db.select({ n: count() }).from(sheets).where(eq(sheets.labId, labId)).get()?.n ?? 0
  return { memberCount, sheetCount }
}

export function labReply(deps: Pick<AppDeps, 'db'>, lab: LabRow, role: Role): Lab {
  return { id: lab.id, name: lab.name, role, createdAt: lab.createdAt, ...counts(deps, lab.id) }
}

export function labById(deps: Pick<AppDeps, 'db'>, labId: string): LabRow | undefined {
  return deps.db.select().from(labs).where(eq(labs.id, labId)).get()
}

export function listLabs(deps: Pick<AppDeps, 'db'>, userId: string): Lab[] {
  const rows = deps.db
    .select({ lab: labs, role: memberships.role })
    .from(memberships)
    .innerJoin(labs, eq(labs.id, memberships.labId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(labs.name), asc(labs.createdAt))
    .all()
  return rows.map((r) => labReply(deps, r.lab, r.role))
}

export function createLab(deps: Pick<AppDeps, 'db'>, userId: string, name: string): Lab {
  const now = Date.now()
  const lab: LabRow = { id: newId(), name, createdBy: userId, createdAt: now }
  deps.db.transaction(() => {
    deps.db.insert(labs).values(lab).run()
    deps.db.insert(memberships).values({ labId: lab.id, userId, role: 'owner', createdAt: now }).run()
  })
  return labReply(deps, lab, 'owner')
}

export function renameLab(deps: Pick<AppDeps, 'db'>, lab: LabRow, role: Role, name: string): Lab {
  deps.db.update(labs).set({ name }).where(eq(labs.id, lab.id)).run()
  return labReply(deps, { ...lab, name }, role)
}

export function listMembers(deps: Pick<AppDeps, 'db'>, labId: string): Member[] {
  return deps.db
    .select({ userId: users.id, name: users.name, email: users.email, role: memberships.role, joinedAt: memberships.createdAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.labId, labId))
    .orderBy(ROLE_ORDER, asc(users.name))
    .all()
}

function memberRow(deps: Pick<AppDeps, 'db'>, labId: string, userId: string): Member | undefined {
  return listMembers(deps, labId).find((m) => m.userId === userId)
}

function ownerCount(deps: Pick<AppDeps, 'db'>, labId: string): number {
  return deps.db.select({ n: count() }).from(memberships).where(and(eq(memberships.labId, labId), eq(memberships.role, 'owner'))).get()?.n ?? 0
}

const LAST_OWNER = 'A lab always keeps at least one owner: make another member owner first.'

export function changeRole(deps: AppDeps, labId: string, userId: string, role: Role): Member {
  const updated = deps.db.transaction(() => {
    const member = memberRow(deps, labId, userId)
    if (!member) throw notFound('That person is not a member of this lab.')
    if (member.role === role) return { member, changed: false }
    if (member.role === 'owner' && ownerCount(deps, labId) <= 1) throw conflict(LAST_OWNER)
    deps.db.update(memberships).set({ role }).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId))).run()
    return { member: { ...member, role }, changed: true }
  })
  if (updated.changed) callHook(deps, 'membershipChanged', labId, userId)
  return updated.member
}

/** Removes a member (an owner removing someone, or anyone leaving). */
export function removeMember(deps: AppDeps, labId: string, userId: string): void {
  deps.db.transaction(() => {
    const member = memberRow(deps, labId, userId)
    if (!member) throw notFound('That person is not a member of this lab.')
    if (member.role === 'owner' && ownerCount(deps, labId) <= 1) throw conflict(LAST_OWNER)
    deps.db.delete(memberships).where(and(eq(memberships.labId, labId), eq(memberships.userId, userId))).run()
  })
  callHook(deps, 'membershipChanged', labId, userId)
}
