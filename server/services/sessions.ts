/**
 * Sessions: a jose-signed (HS256) token in an httpOnly cookie. The same check serves REST requests and the
 * websocket upgrade, so both see the same person or nobody.
 */
import { SignJWT, jwtVerify, errors as joseErrors } from 'jose'
import { eq } from 'drizzle-orm'
import { randomUUID } from 'node:crypto'
import type { Db } from '../db/client'
import { users, sessionsRevoked } from '../db/tables'

export const SESSION_COOKIE = 'penumbra_session'
export const SESSION_TTL_SECONDS = 7 * 24 * 3600
const ISSUER = 'penumbra'

export interface SessionClaims {
  userId: string
  jti: string
  /** Expiry, seconds since the epoch. */
  exp: number
  /** Issue time, seconds since the epoch (0 when the token has none). */
  iat: number
  /**
   * Issue time in milliseconds (the `ims` claim; from `iat` for tokens signed before it existed): a password change
   * or reset ends the sessions issued before it to the millisecond, not to the second.
   */
  issuedAtMs: number
}

export type SessionFailure = 'missing' | 'expired' | 'invalid' | 'revoked' | 'unknown-user'

export async function signSession(secret: Uint8Array, userId: string, ttlSeconds = SESSION_TTL_SECONDS) {
  const jti = randomUUID()
  const now = Date.now()
  const exp = Math.floor(now / 1000) + ttlSeconds
  const token = await new SignJWT({ ims: now })
    .setProtectedHeader({ alg: 'HS256' })
    .setSubject(userId)
    .setJti(jti)
    .setIssuer(ISSUER)
    .setIssuedAt(Math.floor(now / 1000))
    .setExpirationTime(exp)
    .sign(secret)
  return { token, jti, exp }
}

/** Verifies signature, issuer and expiry. Never throws: a bad token is a reason. */
export async function verifySession(
  secret: Uint8Array,
  token: string | undefined,
): Promise<{ ok: true; claims: SessionClaims } | { ok: false; reason: SessionFailure }> {
  if (!token) return { ok: false, reason: 'missing' }
  try {
    const { payload } = await jwtVerify(token, secret, { issuer: ISSUER, algorithms: ['HS256'] })
    if (typeof payload.sub !== 'string' || typeof payload.jti !== 'string' || typeof payload.exp !== 'number')
      return { ok: false, reason: 'invalid' }
    const iat = typeof payload.iat === 'number' ? payload.iat : 0
    const issuedAtMs = typeof payload.ims === 'number' && Number.isFinite(payload.ims) ? payload.ims : iat * 1000
    return { ok: true, claims: { userId: payload.sub, jti: payload.jti, exp: payload.exp, iat, issuedAtMs } }
  } catch (err) {
    return { ok: false, reason: err instanceof joseErrors.JWTExpired ? 'expired' : 'invalid' }
  }
}

/** Reads one cookie from a Cookie header (for the websocket upgrade, where cookie-parser does not run). */
export function readCookie(header: string | undefined, name: string): string | undefined {
  if (!header) return undefined
  for (const part of header.split(';')) {
    const eqAt = part.indexOf('=')
    if (eqAt < 0) continue
    if (part.slice(0, eqAt).trim() === name) {
      const raw = part.slice(eqAt + 1).trim()
      try {
        return decodeURIComponent(raw)
      } catch {
        return raw
      }
    }
  }
  return undefined
}

export interface SessionUser {
  id: string
  email: string
  name: string
  jti: string
  exp: number
}

/** The signed-in user behind a session token: valid signature, not expired, not signed out, user still exists. */
export async function userForToken(
  db: Db,
  secret: Uint8Array,
  token: string | undefined,
): Promise<{ ok: true; user: SessionUser } | { ok: false; reason: SessionFailure }> {
  const verified = await verifySession(secret, token)
  if (!verified.ok) return verified
  const { claims } = verified
  const [revoked] = await db.select({ jti: sessionsRevoked.jti }).from(sessionsRevoked).where(eq(sessionsRevoked.jti, claims.jti))
  if (revoked) return { ok: false, reason: 'revoked' }
  const [user] = await db.select().from(users).where(eq(users.id, claims.userId))
  if (!user) return { ok: false, reason: 'unknown-user' }
  // a password reset or change ends every session issued before it (to the millisecond; rows written by older builds
  // hold seconds)
  if (user.sessionsValidFrom != null) {
    const validFromMs = user.sessionsValidFrom < 1e11 ? user.sessionsValidFrom * 1000 : user.sessionsValidFrom
    if (claims.issuedAtMs < validFromMs) return { ok: false, reason: 'revoked' }
  }
  return { ok: true, user: { id: user.id, email: user.email, name: user.name, jti: claims.jti, exp: claims.exp } }
}

/** Signs a session out for good: its jti is refused until the token would have expired anyway. */
export async function revokeSession(db: Db, jti: string, exp: number): Promise<void> {
  await db.insert(sessionsRevoked).values({ jti, expiresAt: exp }).onConflictDoNothing()
}
