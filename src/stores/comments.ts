/**
 * The comment threads of one sheet (live and snapshot comments alike). While a page shows them, the list is asked
 * for again every few seconds, so others' comments appear without a reload.
 */
import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as commentsApi from '@/api/comments'
import { toComment, type Comment } from '@/lib/reviewModel'

const POLL_MS = 4000

export const useCommentsStore = defineStore('comments', () => {
  const sheetId = ref('')
  const rows = shallowRef<Comment[]>([])
  const error = ref('')
  const known = shallowRef<ReadonlyMap<string, string>>(new Map())
  /**
   * Where the page's comments belong: the live sheet (`snapshotId` null: every thread of the sheet shows, those made on
   * a snapshot say so) or one snapshot (only its threads). `canComment` is the caller's role allowing it.
   */
  const scope = ref<{ snapshotId: string | null; canComment: boolean; hashes: Record<string, string> }>({ snapshotId: null, canComment: false, hashes: {} })
  /** The cell whose threads the comment drawer shows. */
  const panel = ref<{ cellId: string; cellName: string } | null>(null)
  let timer: ReturnType<typeof setInterval> | null = null
  let watchers = 0

  async function load(id: string = sheetId.value): Promise<void> {
    if (!id) return
    if (sheetId.value !== id) rows.value = []
    sheetId.value = id
    try {
      const list = await commentsApi.listComments(id)
      if (sheetId.value === id) rows.value = list.map((c) => toComment(c, known.value))
      error.value = ''
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    }
  }

  /** Starts keeping the sheet's comments fresh; the returned function stops it. */
  function follow(id: string, names?: ReadonlyMap<string, string>): () => void {
    if (names) known.value = names
    void load(id)
    watchers++
    if (!timer) timer = setInterval(() => void load(), POLL_MS)
    let stopped = false
    return () => {
      if (stopped) return
      stopped = true
      watchers--
      if (watchers <= 0 && timer) {
        clearInterval(timer)
        timer = null
        watchers = 0
      }
    }
  }

  async function add(comment: commentsApi.NewComment): Promise<Comment> {
    const row = toComment(await commentsApi.addComment(sheetId.value, comment), known.value)
    rows.value = [...rows.value.filter((c) => c.id !== row.id), row]
    return row
  }

  async function setResolved(commentId: string, resolved: boolean): Promise<void> {
    await commentsApi.setResolved(commentId, resolved)
    rows.value = rows.value.map((c) => (c.id === commentId ? { ...c, resolved } : c))
  }

  /** The comments the page shows under its scope. */
  const visible = computed(() => (scope.value.snapshotId === null ? rows.value : rows.value.filter((c) => c.snapshotId === scope.value.snapshotId)))

  /** Threads per cell id (open ones and all), for the card badges. */
  const countsByCell = computed(() => {
    const out: Record<string, { open: number; all: number }> = {}
    for (const c of visible.value) {
      if (c.parentId) continue
      const n = (out[c.cellId] ??= { open: 0, all: 0 })
      n.all++
      if (!c.resolved) n.open++
    }
    return out
  })

  function openPanel(cellId: string, cellName = ''): void {
    panel.value = { cellId, cellName }
  }

  return { sheetId, rows, error, known, scope, panel, visible, load, follow, add, setResolved, countsByCell, openPanel }
})
