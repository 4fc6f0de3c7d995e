/** Reviews of snapshots: request, decide, the lab's queue. */
import { reviewSchema, reviewsReply, type Decision, type ReviewRow } from '../../shared/schema/review'
import { api, seg } from './client'

export type { Decision, ReviewRow }

export function requestReview(snapshotId: string, reviewerIds: string[], note: string): Promise<ReviewRow> {
  return api.post(`/api/snapshots/${seg(snapshotId)}/reviews`, { reviewerIds, note }, reviewSchema)
}

export function decideReview(reviewId: string, decision: Decision, note: string): Promise<ReviewRow> {
  return api.patch(`/api/reviews/${seg(reviewId)}`, { decision, note }, reviewSchema)
}

export async function listLabReviews(labId: string): Promise<ReviewRow[]> {
  return (await api.get(`/api/labs/${seg(labId)}/reviews`, reviewsReply)).reviews
}
