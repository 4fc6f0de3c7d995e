/** Guest links to one snapshot: make, list, revoke; and the guest's own read of a link. */
import { guestLinkSchema, guestLinksReply, guestReply, type GuestLinkRow, type SnapshotDetail } from '../../shared/schema/review'
import { api, seg } from './client'

export type { GuestLinkRow }

export function makeGuestLink(snapshotId: string, expiresInDays: number, note: string): Promise<GuestLinkRow> {
  return api.post(`/api/snapshots/${seg(snapshotId)}/guest-links`, { expiresInDays, note }, guestLinkSchema)
}

export async function listGuestLinks(snapshotId: string): Promise<GuestLinkRow[]> {
  return (await api.get(`/api/snapshots/${seg(snapshotId)}/guest-links`, guestLinksReply)).links
}

export function revokeGuestLink(linkId: string): Promise<void> {
  return api.del(`/api/guest-links/${seg(linkId)}`)
}

/** The snapshot behind a guest link; an ApiError 410 when the link expired or was revoked. */
export async function openGuestLink(token: string): Promise<SnapshotDetail> {
  return (await api.get(`/api/guest/${seg(token)}`, guestReply, { quiet401: true })).snapshot
}
