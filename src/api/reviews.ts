/** Reviews of snapshots: request, decide, a snapshot's reviews and the lab's queue. */
import { reviewQueueReply, reviewSchema, reviewsReply, type Review, type ReviewDecisionValue, type ReviewQueue } from '../../shared/schema/api'
import { api, seg } from './client'

export type { Review, ReviewDecisionValue, ReviewQueue }

export function requestReview(snapshotId: string, reviewerIds: string[], note: string): Promise<Review> {
  return api.post(`/api/snapshots/${seg(snapshotId)}/reviews`, { reviewerIds, note }, reviewSchema)
}

export function decideReview(reviewId: string, decision: ReviewDecisionValue, note: string): Promise<Review> {
  return api.patch(`/api/reviews/${seg(reviewId)}`, { decision, note }, reviewSchema)
}

export async function listSnapshotReviews(snapshotId: string): Promise<Review[]> {
  return (await api.get(`/api/snapshots/${seg(snapshotId)}/reviews`, reviewsReply)).reviews
}

/** The caller's queue in a lab: waiting for them, requested by them, decided. */
export function labReviewQueue(labId: string): Promise<ReviewQueue> {
  return api.get(`/api/labs/${seg(labId)}/reviews`, reviewQueueReply)
}
