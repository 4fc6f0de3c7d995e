/** Drops rows that can no longer matter: revoked sessions past their expiry, and mailed links long expired. */
import { lt } from 'drizzle-orm'
import type { Db } from '../db/client'
import { passwordResets, pendingSignups, sessionsRevoked } from '../db/schema'

/** Links are kept a day after they expire, so a late click still reads "expired" rather than "not valid". */
const GRACE_MS = 24 * 3600 * 1000

export function pruneExpired(db: Db, now = Date.now()): { sessions: number; signups: number; resets: number } {
  const sessions = db.delete(sessionsRevoked).where(lt(sessionsRevoked.expiresAt, Math.floor(now / 1000))).run().changes
  const signups = db.delete(pendingSignups).where(lt(pendingSignups.expiresAt, now - GRACE_MS)).run().changes
  const resets = db.delete(passwordResets).where(lt(passwordResets.expiresAt, now - GRACE_MS)).run().changes
  return { sessions, signups, resets }
}
