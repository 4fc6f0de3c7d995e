/** /api/invitations/:token: what a mailed link offers, and accepting it (signed in, or with a new account). */
import { Router } from 'express'
import type { AppDeps } from '../deps'
import { startSession } from '../middleware/auth'
import { limiter } from '../middleware/rateLimits'
import { parse } from '../middleware/validate'
import { acceptInvitation, previewInvitation } from '../services/invitations'
import { publicUser } from '../services/accounts'
import { badRequest } from '../errors'
import { acceptInvitationBody, tokenSchema } from '../../shared/schema/api'

export function invitationRoutes(deps: AppDeps): Router {
  const r = Router()
  const tokenLimit = limiter(deps.config.limits.token, 'attempts with mailed links from this address', { onlyFailures: true, store: deps.rateLimitStores?.('invitation-links') })

  r.get('/:token', tokenLimit, async (req, res) => {
    const token = parse(tokenSchema, req.params.token, 'The invitation link is not valid')
    res.json(await previewInvitation(deps, token, !!req.user))
  })

  r.post('/:token/accept', tokenLimit, async (req, res) => {
    const token = parse(tokenSchema, req.params.token, 'The invitation link is not valid')
    const body = parse(acceptInvitationBody, req.body)
    let result
    if (req.user) {
      result = await acceptInvitation(deps, token, { user: req.user })
    } else {
      if (!body.name || !body.password) {
        const issues = [
          ...(body.name ? [] : [{ path: 'name', message: 'required' }]),
          ...(body.password ? [] : [{ path: 'password', message: 'required' }]),
        ]
        throw badRequest('Sign in to accept with your account, or give a name and a password to create one.', issues)
      }
      result = await acceptInvitation(deps, token, { newAccount: { name: body.name, password: body.password } })
      await startSession(deps, res, result.user.id)
    }
    res.json({ labId: result.lab.id, labName: result.lab.name, role: result.role, user: publicUser(result.user) })
  })

  return r
}
