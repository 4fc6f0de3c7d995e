/** Who may do what: the role lookups every REST route and every websocket connection go through. */
import { and, eq } from 'drizzle-orm'
import type { Db } from '../db/client'
import { memberships, sheets, type Role } from '../db/tables'

export type { Role }

/** Roles that may change a sheet's cells. */
export const WRITE_ROLES: readonly Role[] = ['owner', 'editor']
/** Roles that may comment and decide reviews. */
export const COMMENT_ROLES: readonly Role[] = ['owner', 'editor', 'reviewer']

export function canWrite(role: Role | null | undefined): boolean {
  return !!role && WRITE_ROLES.includes(role)
}

export async function roleInLab(db: Db, labId: string, userId: string): Promise<Role | null> {
  const [row] = await db
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.labId, labId), eq(memberships.userId, userId)))
  return row?.role ?? null
}

/** The sheet (with its lab) and the user's role in that lab; `sheet` is null when no such sheet exists. */
export async function sheetAccess(db: Db, sheetId: string, userId: string) {
  const [sheet] = await db.select().from(sheets).where(eq(sheets.id, sheetId))
  if (!sheet) return { sheet: null, role: null }
  return { sheet, role: await roleInLab(db, sheet.labId, userId) }
}
