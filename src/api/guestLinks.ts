/** Guest links to one snapshot: make, list, revoke; and the guest's own read of a link. */
import {
  guestLinkCreatedReply,
  guestLinksReply,
  guestSnapshotReply,
  type GuestLink,
  type GuestLinkCreated,
  type GuestSnapshot,
} from '../../shared/schema/api'
import { api, seg } from './client'

export type { GuestLink, GuestLinkCreated, GuestSnapshot }

export function makeGuestLink(snapshotId: string, expiresInDays: number, note: string): Promise<GuestLinkCreated> {
  return api.post(`/api/snapshots/${seg(snapshotId)}/guest-links`, { expiresInDays, note }, guestLinkCreatedReply)
}

export async function listGuestLinks(snapshotId: string): Promise<GuestLink[]> {
  return (await api.get(`/api/snapshots/${seg(snapshotId)}/guest-links`, guestLinksReply)).links
}

export function revokeGuestLink(linkId: string): Promise<void> {
  return api.del(`/api/guest-links/${seg(linkId)}`)
}

/** The snapshot behind a guest link; an ApiError 410 when the link expired or was revoked. */
export function openGuestLink(token: string): Promise<GuestSnapshot> {
  return api.get(`/api/guest/${seg(token)}`, guestSnapshotReply, { quiet401: true })
}
