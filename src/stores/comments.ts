/**
 * The comment threads of one sheet (live and snapshot comments alike), kept current through the sheet's comment
 * event stream while a page shows them, plus which cell's threads the comment drawer shows.
 */
import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as commentsApi from '@/api/comments'
import type { Comment, CreateCommentBody } from '@/api/comments'

export const useCommentsStore = defineStore('comments', () => {
  const sheetId = ref('')
  const rows = shallowRef<Comment[]>([])
  const error = ref('')
  /**
   * Where the page's comments belong: the live sheet (`snapshotId` null: every thread of the sheet shows, those made on
   * a snapshot say so) or one snapshot (only its threads). `canComment` is the caller's role allowing it.
   */
  const scope = ref<{ snapshotId: string | null; canComment: boolean }>({ snapshotId: null, canComment: false })
  /** The cell whose threads the comment drawer shows. */
  const panel = ref<{ cellId: string; cellName: string } | null>(null)

  function put(comment: Comment): void {
    if (comment.sheetId !== sheetId.value) return
    rows.value = [...rows.value.filter((c) => c.id !== comment.id), comment]
  }

  async function load(id: string = sheetId.value): Promise<void> {
    if (!id) return
    if (sheetId.value !== id) rows.value = []
    sheetId.value = id
    try {
      const list = await commentsApi.listComments(id)
      if (sheetId.value === id) rows.value = list
      error.value = ''
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    }
  }

  /** Loads the sheet's comments and follows its event stream; the returned function stops following. */
  function follow(id: string): () => void {
    void load(id)
    return commentsApi.followComments(id, put)
  }

  async function add(comment: CreateCommentBody): Promise<Comment> {
    const row = await commentsApi.addComment(sheetId.value, comment)
    put(row)
    return row
  }

  async function setResolved(commentId: string, resolved: boolean): Promise<void> {
    put(await commentsApi.setResolved(commentId, resolved))
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

  return { sheetId, rows, error, scope, panel, visible, load, follow, add, setResolved, countsByCell, openPanel }
})
