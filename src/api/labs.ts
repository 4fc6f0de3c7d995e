/** Labs, their members and invitations. */
import {
  acceptInvitationReply,
  invitationPreviewReply,
  invitationSchema,
  invitationsReply,
  labReply,
  labsReply,
  memberSchema,
  membersReply,
  type AcceptInvitationBody,
  type AcceptInvitationReply,
  type Invitation,
  type InvitationPreview,
  type Lab,
  type LabRole,
  type Member,
} from '../../shared/schema/api'
import { api, seg } from './client'

export type { AcceptInvitationReply, Invitation, InvitationPreview, Lab, LabRole, Member }

export async function listLabs(): Promise<Lab[]> {
  return (await api.get('/api/labs', labsReply)).labs
}

export function getLab(labId: string): Promise<Lab> {
  return api.get(`/api/labs/${seg(labId)}`, labReply)
}

export function createLab(name: string): Promise<Lab> {
  return api.post('/api/labs', { name }, labReply)
}

export function renameLab(labId: string, name: string): Promise<Lab> {
  return api.patch(`/api/labs/${seg(labId)}`, { name }, labReply)
}

export async function listMembers(labId: string): Promise<Member[]> {
  return (await api.get(`/api/labs/${seg(labId)}/members`, membersReply)).members
}

export function changeRole(labId: string, userId: string, role: LabRole): Promise<Member> {
  return api.patch(`/api/labs/${seg(labId)}/members/${seg(userId)}`, { role }, memberSchema)
}

/** Removes a member; called with one's own id it is leaving the lab. */
export function removeMember(labId: string, userId: string): Promise<void> {
  return api.del(`/api/labs/${seg(labId)}/members/${seg(userId)}`)
}

export function invite(labId: string, email: string, role: LabRole): Promise<Invitation> {
  return api.post(`/api/labs/${seg(labId)}/invitations`, { email, role }, invitationSchema)
}

export async function listInvitations(labId: string): Promise<Invitation[]> {
  return (await api.get(`/api/labs/${seg(labId)}/invitations`, invitationsReply)).invitations
}

export function cancelInvitation(labId: string, invitationId: string): Promise<void> {
  return api.del(`/api/labs/${seg(labId)}/invitations/${seg(invitationId)}`)
}

/** What a mailed invitation link offers; needs no session. */
export function previewInvitation(token: string): Promise<InvitationPreview> {
  return api.get(`/api/invitations/${seg(token)}`, invitationPreviewReply, { quiet401: true })
}

/** Signed in: `{}` joins with the current account. Signed out: `{ name, password }` creates the invited account. */
export function acceptInvitation(token: string, body: AcceptInvitationBody = {}): Promise<AcceptInvitationReply> {
  return api.post(`/api/invitations/${seg(token)}/accept`, body, acceptInvitationReply, { quiet401: true })
}
