/** The reviews of a lab (the queue page and every snapshot's review state), and asking for and deciding reviews. */
import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as reviewsApi from '@/api/reviews'
import type { Decision } from '@/api/reviews'
import { toReview, type Review } from '@/lib/reviewModel'

export const useReviewsStore = defineStore('reviews', () => {
  const labId = ref('')
  const reviews = shallowRef<Review[]>([])
  const loading = ref(false)
  const error = ref('')
  const known = shallowRef<ReadonlyMap<string, string>>(new Map())

  async function load(id: string, names?: ReadonlyMap<string, string>): Promise<void> {
    if (names) known.value = names
    if (labId.value !== id) reviews.value = []
    labId.value = id
    loading.value = true
    error.value = ''
    try {
      const list = await reviewsApi.listLabReviews(id)
      if (labId.value === id) reviews.value = list.map((r) => toReview(r, known.value))
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    } finally {
      loading.value = false
    }
  }

  function put(review: Review): void {
    reviews.value = [review, ...reviews.value.filter((r) => r.id !== review.id)]
  }

  async function request(snapshotId: string, reviewerIds: string[], note: string): Promise<Review> {
    const review = toReview(await reviewsApi.requestReview(snapshotId, reviewerIds, note), known.value)
    put(review)
    if (labId.value) void load(labId.value)
    return review
  }

  async function decide(reviewId: string, decision: Decision, note: string): Promise<Review> {
    const review = toReview(await reviewsApi.decideReview(reviewId, decision, note), known.value)
    put(review)
    if (labId.value) void load(labId.value)
    return review
  }

  function ofSnapshot(snapshotId: string): Review[] {
    return reviews.value.filter((r) => r.snapshotId === snapshotId).sort((a, b) => b.createdAt - a.createdAt)
  }

  return { labId, reviews, loading, error, known, load, request, decide, ofSnapshot }
})
