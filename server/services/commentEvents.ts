/**
 * The live channel for comments: listeners per sheet (the server-sent event streams of
 * GET /api/sheets/:sheetId/comments/events). In one process this is a map of callbacks; with several app instances
 * (DESIGN §10) `publishComment` is the one place to also publish on the shared bus.
 */
import type { Comment } from '../../shared/schema/api'

type Listener = (comment: Comment) => void
const listeners = new Map<string, Set<Listener>>()

export function subscribeComments(sheetId: string, listener: Listener): () => void {
  let set = listeners.get(sheetId)
  if (!set) listeners.set(sheetId, (set = new Set()))
  set.add(listener)
  return () => {
    set.delete(listener)
    if (set.size === 0 && listeners.get(sheetId) === set) listeners.delete(sheetId)
  }
}

export function publishComment(sheetId: string, comment: Comment): void {
  for (const listener of [...(listeners.get(sheetId) ?? [])]) {
    try {
      listener(comment)
    } catch (err) {
      console.warn(`a comment listener failed: ${err instanceof Error ? err.message : String(err)}`)
    }
  }
}
