/**
 * What every page about a snapshot loads: the sheet (its title, lab and the caller's role), the snapshot with its file
 * and stored results, the sheet's timeline, the lab's members (names) and reviews (states and decisions).
 */
import { computed, ref, shallowRef, watch, type Ref } from 'vue'
import { getSheet, type Sheet } from '@/api/sheets'
import { messageOf } from '@/api/client'
import { useSnapshotsStore } from '@/stores/snapshots'
import { useReviewsStore } from '@/stores/reviews'
import { useLabMembers } from './useLabMembers'
import { nameOf, snapshotState } from '@/lib/reviewModel'
import type { SnapshotDetail, SnapshotSummary } from '@/api/snapshots'

export function useSnapshotPage(sheetId: Ref<string>, snapshotId: Ref<string>) {
  const snapshots = useSnapshotsStore()
  const reviews = useReviewsStore()
  const sheet = shallowRef<Sheet | null>(null)
  const snapshot = shallowRef<SnapshotDetail | null>(null)
  const error = ref('')
  const { names, people } = useLabMembers(computed(() => sheet.value?.labId))

  watch(
    [sheetId, snapshotId],
    async ([sid, id]) => {
      error.value = ''
      snapshot.value = null
      try {
        const [meta, detail] = await Promise.all([sheet.value?.id === sid ? sheet.value : getSheet(sid), snapshots.get(id)])
        if (sid !== sheetId.value || id !== snapshotId.value) return
        sheet.value = meta
        snapshot.value = detail
        void snapshots.loadTimeline(sid)
        void reviews.load(meta.labId, names.value)
      } catch (err) {
        error.value = messageOf(err)
      }
    },
    { immediate: true },
  )
  watch(names, (n) => {
    if (sheet.value) void reviews.load(sheet.value.labId, n)
  })

  /** The author's name: from the reply, else the members list. */
  function authorOf(s: SnapshotSummary): string {
    return s.authorName || nameOf(s.createdBy, names.value).name
  }
  const state = computed(() => (snapshot.value ? snapshotState(reviews.reviews, snapshot.value.id) : 'none'))

  return { sheet, snapshot, error, names, people, authorOf, state, snapshots, reviews }
}
