/** /api/auth: sign-up and its confirmation, sign-in and out, who am I, profile, password change and reset. */
import { Router } from 'express'
import type { AppDeps } from '../deps'
import { clearSession, requireUser, startSession } from '../middleware/auth'
import { limiter } from '../middleware/rateLimits'
import { parse } from '../middleware/validate'
import {
  changePassword, checkCredentials, confirmSignUp, publicUser, requestReset, requestSignUp, resetPassword, updateName, userById,
} from '../services/accounts'
import { revokeSession } from '../services/sessions'
import { callHook } from '../deps'
import { unauthorized } from '../errors'
import {
  changePasswordBody, confirmSignUpBody, resetBody, resetRequestBody, signInBody, signUpBody, updateMeBody,
} from '../../shared/schema/api'

/** One answer for a wrong password, an unknown address and a sign-up whose mailed link was not opened yet. */
export const SIGN_IN_FAILED = 'E-mail or password is wrong. If you have just signed up, open the link we mailed you first.'

export function authRoutes(deps: AppDeps): Router {
  const r = Router()
  const signInLimit = limiter(deps.config.limits.signIn, 'failed sign-ins from this address', { onlyFailures: true, store: deps.rateLimitStores?.('sign-in') })
  const mailLimit = limiter(deps.config.limits.mail, 'mail requests from this address', { store: deps.rateLimitStores?.('mail') })
  const tokenLimit = limiter(deps.config.limits.token, 'attempts with mailed links from this address', { onlyFailures: true, store: deps.rateLimitStores?.('account-links') })

  r.post('/sign-up', mailLimit, async (req, res) => {
    const body = parse(signUpBody, req.body)
    await requestSignUp(deps, body)
    // The same answer whether or not the address has an account (that owner gets a mail saying so instead).
    res.status(201).json({
      message: `Check your mail: we sent a link to ${body.email}. Open it to finish signing up; after that you can sign in with this e-mail and password.`,
    })
  })

  r.post('/confirm', tokenLimit, async (req, res) => {
    const { token, password } = parse(confirmSignUpBody, req.body)
    const user = await confirmSignUp(deps, token, password)
    await startSession(deps, res, user.id)
    res.json({ user: publicUser(user) })
  })

  r.post('/sign-in', signInLimit, async (req, res) => {
    const { email, password } = parse(signInBody, req.body)
    const user = await checkCredentials(deps, email, password)
    if (!user) throw unauthorized(SIGN_IN_FAILED)
    await startSession(deps, res, user.id)
    res.json({ user: publicUser(user) })
  })

  r.post('/sign-out', async (req, res) => {
    if (req.user) {
      await revokeSession(deps.db, req.user.jti, req.user.exp)
      callHook(deps, 'sessionsEnded', req.user.id)
    }
    clearSession(deps, res)
    res.status(204).end()
  })

  // Who is signed in. Nobody (no session cookie sent) is an answer, not an error: 200 { user: null }, so a signed-out
  // visitor's page logs no failed request. A cookie whose session ended (expired, revoked, forged, account deleted)
  // is still a 401 with the reason, as on every route that needs a session.
  r.get(
    '/me',
    (req, res, next) => {
      if (!req.user && !req.sessionFailure) res.json({ user: null })
      else next()
    },
    requireUser,
    (req, res) => {
      res.json({ user: publicUser(req.user!) })
    },
  )

  r.patch('/me', requireUser, async (req, res) => {
    const { name } = parse(updateMeBody, req.body)
    res.json({ user: publicUser(await updateName(deps, req.user!.id, name)) })
  })

  r.post('/password', requireUser, async (req, res) => {
    const body = parse(changePasswordBody, req.body)
    await changePassword(deps, req.user!.id, body.currentPassword, body.newPassword)
    // every older session ended; this one continues with a fresh token
    const user = await userById(deps, req.user!.id)
    if (user) await startSession(deps, res, user.id)
    res.status(204).end()
  })

  r.post('/reset-request', mailLimit, async (req, res) => {
    const { email } = parse(resetRequestBody, req.body)
    await requestReset(deps, email)
    res.status(202).json({ message: `If ${email} has a Penumbra account, a link to choose a new password is on its way.` })
  })

  r.post('/reset', tokenLimit, async (req, res) => {
    const { token, password } = parse(resetBody, req.body)
    await resetPassword(deps, token, password)
    res.status(204).end()
  })

  return r
}
