/**
 * What every page about a snapshot loads: the sheet (its title, lab and the caller's role), the snapshot with its file
 * and stored results, the sheet's timeline, the snapshot's reviews and the lab's members (reviewer picker, mentions).
 */
import { computed, ref, shallowRef, watch, type Ref } from 'vue'
import { getSheet, type Sheet } from '@/api/sheets'
import { messageOf } from '@/api/client'
import { useSnapshotsStore } from '@/stores/snapshots'
import { useReviewsStore } from '@/stores/reviews'
import { useLabMembers } from './useLabMembers'
import type { SnapshotDetail } from '@/api/snapshots'

export function useSnapshotPage(sheetId: Ref<string>, snapshotId: Ref<string>) {
  const snapshots = useSnapshotsStore()
  const reviews = useReviewsStore()
  const sheet = shallowRef<Sheet | null>(null)
  const snapshot = shallowRef<SnapshotDetail | null>(null)
  const error = ref('')
  const { people } = useLabMembers(computed(() => sheet.value?.labId))

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
        void reviews.loadSnapshot(id)
      } catch (err) {
        error.value = messageOf(err)
      }
    },
    { immediate: true },
  )

  /** The state of the snapshot's newest review, as the reviews loaded here say (after a decision too). */
  const state = computed(() => {
    const s = snapshot.value
    if (!s) return 'none' as const
    const newest = reviews.ofSnapshot(s.id)[0]
    return newest?.state ?? s.reviewState ?? ('none' as const)
  })

  return { sheet, snapshot, error, people, state, snapshots, reviews }
}
