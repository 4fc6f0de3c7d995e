/** A sheet's snapshots (the timeline) and the snapshots opened in full (file and stored results), kept by id. */
import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as snapshotsApi from '@/api/snapshots'
import type { SnapshotDetail, SnapshotSummary } from '@/api/snapshots'

export const useSnapshotsStore = defineStore('snapshots', () => {
  const sheetId = ref('')
  const timeline = shallowRef<SnapshotSummary[]>([])
  const loading = ref(false)
  const error = ref('')
  const details = shallowRef<Record<string, SnapshotDetail>>({})

  async function loadTimeline(id: string): Promise<void> {
    if (sheetId.value !== id) timeline.value = []
    sheetId.value = id
    loading.value = true
    error.value = ''
    try {
      const list = await snapshotsApi.listSnapshots(id)
      if (sheetId.value === id) timeline.value = list
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    } finally {
      loading.value = false
    }
  }

  async function freeze(id: string, message: string): Promise<SnapshotSummary> {
    const snapshot = await snapshotsApi.freezeSnapshot(id, message)
    if (sheetId.value === id) timeline.value = [snapshot, ...timeline.value.filter((s) => s.id !== snapshot.id)]
    return snapshot
  }

  /** A snapshot in full; a snapshot never changes, so one fetch per id is enough. */
  async function get(snapshotId: string): Promise<SnapshotDetail> {
    const known = details.value[snapshotId]
    if (known) return known
    const detail = await snapshotsApi.getSnapshot(snapshotId)
    details.value = { ...details.value, [snapshotId]: detail }
    return detail
  }

  /** The snapshot frozen just before this one in the loaded timeline, if any. */
  function previous(snapshotId: string): SnapshotSummary | null {
    const i = timeline.value.findIndex((s) => s.id === snapshotId)
    return i >= 0 ? (timeline.value[i + 1] ?? null) : null
  }

  return { sheetId, timeline, loading, error, details, loadTimeline, freeze, get, previous }
})
