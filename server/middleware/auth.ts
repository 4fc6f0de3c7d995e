/** Reads the session cookie on every request; `requireUser` answers 401 when nobody (valid) is signed in. */
import type { CookieOptions, Request, RequestHandler, Response } from 'express'
import type { AppDeps } from '../deps'
import { SESSION_COOKIE, signSession, userForToken, type SessionFailure } from '../services/sessions'
import { unauthorized } from '../errors'

export function sessionLoader(deps: AppDeps): RequestHandler {
  return async (req, _res, next) => {
    const token = (req.cookies as Record<string, string> | undefined)?.[SESSION_COOKIE]
    if (!token) {
      req.user = null
      return next()
    }
    const found = await userForToken(deps.db, deps.secret, token)
    if (found.ok) req.user = found.user
    else {
      req.user = null
      req.sessionFailure = found.reason
    }
    next()
  }
}

const FAILURE_MESSAGES: Record<SessionFailure, string> = {
  missing: 'Sign in first.',
  expired: 'Your session has expired. Sign in again.',
  invalid: 'Your session is not valid. Sign in again.',
  revoked: 'You were signed out. Sign in again.',
  'unknown-user': 'Your account no longer exists.',
}

export const requireUser: RequestHandler = (req, _res, next) => {
  if (!req.user) throw unauthorized(FAILURE_MESSAGES[req.sessionFailure ?? 'missing'])
  next()
}

/**
 * httpOnly (scripts never read it), SameSite=Lax (not sent with cross-site posts), and Secure when the app is public
 * over https (config.cookieSecure) or this request came over https — directly, or through a trusted proxy's
 * X-Forwarded-Proto (TRUST_PROXY).
 */
export function cookieOptions(deps: AppDeps, req: Request): CookieOptions {
  return { httpOnly: true, sameSite: 'lax', secure: deps.config.cookieSecure || req.secure, path: '/' }
}

/** Signs a session for the user and sets the cookie. */
export async function startSession(deps: AppDeps, res: Response, userId: string): Promise<void> {
  const ttl = deps.config.ttl.sessionSeconds
  const { token } = await signSession(deps.secret, userId, ttl)
  res.cookie(SESSION_COOKIE, token, { ...cookieOptions(deps, res.req), maxAge: ttl * 1000 })
}

export function clearSession(deps: AppDeps, res: Response): void {
  res.clearCookie(SESSION_COOKIE, cookieOptions(deps, res.req))
}
