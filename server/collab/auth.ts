/**
 * The `authenticate` hook: who is opening `/collab/<sheetId>`, from the session cookie, and with which role — decided
 * before the websocket is accepted. Also the Origin check, so another site's page cannot open a socket with the
 * visitor's cookie.
 */
import type { IncomingMessage } from 'node:http'
import type { Db } from '../db/client'
import type { Role } from '../db/schema'
import { SESSION_COOKIE, readCookie, userForToken, type SessionUser } from '../services/sessions'
import { sheetAccess } from '../services/access'

export const COLLAB_PATH_PREFIX = '/collab/'

export interface Admission {
  user: SessionUser
  sheetId: string
  labId: string
  role: Role
  /** The session token, so the session can be checked again while the socket stays open. */
  token: string
}

export type AuthOutcome = { ok: true; admission: Admission } | { ok: false; status: 400 | 401 | 403 | 404; message: string }

export type Authenticate = (req: IncomingMessage) => Promise<AuthOutcome>

/** The sheet id in `/collab/<sheetId>` (query string ignored), or null when the path is not a collab path. */
export function sheetIdFromUrl(url: string | undefined): string | null {
  if (!url) return null
  const path = url.split('?')[0]
  if (!path.startsWith(COLLAB_PATH_PREFIX)) return null
  let id: string
  try {
    id = decodeURIComponent(path.slice(COLLAB_PATH_PREFIX.length))
  } catch {
    return null
  }
  return id.length > 0 && id.length <= 128 && !/[/\\\s]/.test(id) ? id : null
}

/**
 * Origin policy: a request without Origin is not from a browser page and is judged by its cookie alone; a browser's
 * Origin must be in `allowedOrigins` when that list is given, otherwise its host must be the request's Host.
 */
export function originAllowed(req: IncomingMessage, allowedOrigins?: readonly string[]): boolean {
  const origin = req.headers.origin
  if (origin === undefined) return true
  if (allowedOrigins && allowedOrigins.length > 0) return allowedOrigins.includes(origin)
  let host: string
  try {
    host = new URL(origin).host
  } catch {
    return false
  }
  return !!req.headers.host && host.toLowerCase() === req.headers.host.toLowerCase()
}

const SESSION_MESSAGES: Record<string, string> = {
  missing: 'sign in to open this sheet',
  expired: 'your session has expired; sign in again',
  invalid: 'your session is not valid; sign in again',
  revoked: 'you have signed out; sign in again',
  'unknown-user': 'your account no longer exists',
}

export function sessionMessage(reason: string): string {
  return SESSION_MESSAGES[reason] ?? 'sign in to open this sheet'
}

export function createAuthenticate(db: Db, secret: Uint8Array, allowedOrigins?: readonly string[]): Authenticate {
  return async (req) => {
    const sheetId = sheetIdFromUrl(req.url)
    if (!sheetId) return { ok: false, status: 404, message: 'no such collaboration endpoint' }
    // Who first (no or bad session: 401), then from where and to what (403).
    const token = readCookie(req.headers.cookie, SESSION_COOKIE)
    const session = await userForToken(db, secret, token)
    if (!session.ok || !token) return { ok: false, status: 401, message: sessionMessage(session.ok ? 'missing' : session.reason) }
    if (!originAllowed(req, allowedOrigins)) return { ok: false, status: 403, message: 'this origin may not open sheets' }
    const access = await sheetAccess(db, sheetId, session.user.id)
    if (!access.sheet) return { ok: false, status: 404, message: 'no such sheet' }
    if (!access.role) return { ok: false, status: 403, message: 'you are not a member of the lab that owns this sheet' }
    return { ok: true, admission: { user: session.user, sheetId, labId: access.sheet.labId, role: access.role, token } }
  }
}
