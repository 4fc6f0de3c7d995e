/** /api/labs: my labs, one lab, its members, role changes and removal, invitations. */
import { Router } from 'express'
import type { AppDeps } from '../deps'
import { requireUser } from '../middleware/auth'
import { allowRoles, loadLab } from '../middleware/roles'
import { parse } from '../middleware/validate'
import { changeRole, createLab, labReply, listLabs, listMembers, removeMember, renameLab } from '../services/labs'
import { createInvitation, listInvitations, revokeInvitation } from '../services/invitations'
import { forbidden } from '../errors'
import { changeRoleBody, createLabBody, inviteBody, renameLabBody } from '../../shared/schema/api'

const OWNERS_ONLY = (what: string) => `Only the lab's owners may ${what}.`

export function labRoutes(deps: AppDeps): Router {
  const r = Router()
  const lab = loadLab(deps)
  const owner = (what: string) => allowRoles(['owner'], OWNERS_ONLY(what))
  r.use(requireUser)

  r.get('/', async (req, res) => {
    res.json({ labs: await listLabs(deps, req.user!.id) })
  })

  r.post('/', async (req, res) => {
    const { name } = parse(createLabBody, req.body)
    res.status(201).json(await createLab(deps, req.user!.id, name))
  })

  r.get('/:labId', lab, async (req, res) => {
    res.json(await labReply(deps, req.lab!, req.role!))
  })

  r.patch('/:labId', lab, owner('rename the lab'), async (req, res) => {
    const { name } = parse(renameLabBody, req.body)
    res.json(await renameLab(deps, req.lab!, req.role!, name))
  })

  r.get('/:labId/members', lab, async (req, res) => {
    res.json({ members: await listMembers(deps, req.lab!.id) })
  })

  r.patch('/:labId/members/:userId', lab, owner('change roles'), async (req, res) => {
    const { role } = parse(changeRoleBody, req.body)
    res.json(await changeRole(deps, req.lab!.id, String(req.params.userId), role))
  })

  r.delete('/:labId/members/:userId', lab, async (req, res) => {
    const target = String(req.params.userId)
    if (target !== req.user!.id && req.role !== 'owner') throw forbidden(OWNERS_ONLY('remove other members'))
    await removeMember(deps, req.lab!.id, target)
    res.status(204).end()
  })

  r.get('/:labId/invitations', lab, owner('see invitations'), async (req, res) => {
    res.json({ invitations: await listInvitations(deps, req.lab!.id) })
  })

  r.post('/:labId/invitations', lab, owner('invite people'), async (req, res) => {
    const { email, role } = parse(inviteBody, req.body)
    res.status(201).json(await createInvitation(deps, req.lab!, req.user!, email, role))
  })

  r.delete('/:labId/invitations/:invitationId', lab, owner('withdraw invitations'), async (req, res) => {
    await revokeInvitation(deps, req.lab!.id, String(req.params.invitationId))
    res.status(204).end()
  })

  return r
}
