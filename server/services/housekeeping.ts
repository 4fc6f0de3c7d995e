/** Drops rows that can no longer matter: revoked sessions past their expiry, and mailed links long expired. */
import { lt } from 'drizzle-orm'
import type { Db } from '../db/client'
import { passwordResets, pendingSignups, sessionsRevoked } from '../db/tables'

/** Links are kept a day after they expire, so a late click still reads "expired" rather than "not valid". */
const GRACE_MS = 24 * 3600 * 1000

export async function pruneExpired(db: Db, now = Date.now()): Promise<{ sessions: number; signups: number; resets: number }> {
  const sessions = (await db.delete(sessionsRevoked).where(lt(sessionsRevoked.expiresAt, Math.floor(now / 1000))).returning({ jti: sessionsRevoked.jti })).length
  const signups = (await db.delete(pendingSignups).where(lt(pendingSignups.expiresAt, now - GRACE_MS)).returning({ id: pendingSignups.id })).length
  const resets = (await db.delete(passwordResets).where(lt(passwordResets.expiresAt, now - GRACE_MS)).returning({ id: passwordResets.id })).length
  return { sessions, signups, resets }
}
