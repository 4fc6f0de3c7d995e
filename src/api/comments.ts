/** Comment threads on cells, of the live sheet or of one snapshot, and the sheet's stream of comment events. */
import { commentSchema, commentsReply, type Comment, type CreateCommentBody } from '../../shared/schema/api'
import { api, seg } from './client'

export type { Comment, CreateCommentBody }

export async function listComments(sheetId: string): Promise<Comment[]> {
  return (await api.get(`/api/sheets/${seg(sheetId)}/comments`, commentsReply)).comments
}

export function addComment(sheetId: string, comment: CreateCommentBody): Promise<Comment> {
  return api.post(`/api/sheets/${seg(sheetId)}/comments`, comment, commentSchema)
}

export function setResolved(commentId: string, resolved: boolean): Promise<Comment> {
  return api.patch(`/api/comments/${seg(commentId)}`, { resolved }, commentSchema)
}

/**
 * Listens to the sheet's comment events (server-sent: one per comment made, resolved or reopened). Each event is
 * checked against the comment schema; unreadable events are ignored. Returns the function that stops listening.
 */
export function followComments(sheetId: string, onComment: (comment: Comment) => void): () => void {
  if (typeof EventSource === 'undefined') return () => undefined
  const source = new EventSource(`/api/sheets/${seg(sheetId)}/comments/events`, { withCredentials: true })
  source.addEventListener('comment', (event) => {
    try {
      const parsed = commentSchema.safeParse(JSON.parse((event as MessageEvent<string>).data))
      if (parsed.success) onComment(parsed.data)
    } catch {
      // not JSON: ignored
    }
  })
  return () => source.close()
}
