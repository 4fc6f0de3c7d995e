/** Reviews: the caller's queue in a lab, the reviews of each snapshot opened, asking for and deciding reviews. */
import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as reviewsApi from '@/api/reviews'
import type { Review, ReviewDecisionValue, ReviewQueue } from '@/api/reviews'

const EMPTY: ReviewQueue = { waiting: [], requested: [], decided: [] }

export const useReviewsStore = defineStore('reviews', () => {
  const labId = ref('')
  const queue = shallowRef<ReviewQueue>(EMPTY)
  const loading = ref(false)
  const error = ref('')
  const bySnapshot = shallowRef<Record<string, Review[]>>({})

  async function loadQueue(id: string): Promise<void> {
    if (labId.value !== id) queue.value = EMPTY
    labId.value = id
    loading.value = true
    error.value = ''
    try {
      const q = await reviewsApi.labReviewQueue(id)
      if (labId.value === id) queue.value = q
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    } finally {
      loading.value = false
    }
  }

  async function loadSnapshot(snapshotId: string): Promise<void> {
    try {
      const list = await reviewsApi.listSnapshotReviews(snapshotId)
      bySnapshot.value = { ...bySnapshot.value, [snapshotId]: list }
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    }
  }

  function put(review: Review): void {
    const list = bySnapshot.value[review.snapshotId] ?? []
    bySnapshot.value = { ...bySnapshot.value, [review.snapshotId]: [review, ...list.filter((r) => r.id !== review.id)] }
    if (labId.value === review.labId) void loadQueue(review.labId)
  }

  async function request(snapshotId: string, reviewerIds: string[], note: string): Promise<Review> {
    const review = await reviewsApi.requestReview(snapshotId, reviewerIds, note)
    put(review)
    return review
  }

  async function decide(reviewId: string, decision: ReviewDecisionValue, note: string): Promise<Review> {
    const review = await reviewsApi.decideReview(reviewId, decision, note)
    put(review)
    return review
  }

  function ofSnapshot(snapshotId: string): Review[] {
    return bySnapshot.value[snapshotId] ?? []
  }

  return { labId, queue, loading, error, bySnapshot, loadQueue, loadSnapshot, request, decide, ofSnapshot }
})
