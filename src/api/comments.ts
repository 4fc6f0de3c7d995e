/** Comment threads on cells, of the live sheet or of one snapshot. */
import { commentSchema, commentsReply, type CommentRow } from '../../shared/schema/review'
import { api, seg } from './client'

export type { CommentRow }

export interface NewComment {
  cellId: string
  text: string
  snapshotId?: string
  /** The thread's first comment, for a reply. */
  parentId?: string
}

export async function listComments(sheetId: string): Promise<CommentRow[]> {
  return (await api.get(`/api/sheets/${seg(sheetId)}/comments`, commentsReply)).comments
}

export function addComment(sheetId: string, comment: NewComment): Promise<CommentRow> {
  return api.post(`/api/sheets/${seg(sheetId)}/comments`, comment, commentSchema)
}

export function setResolved(commentId: string, resolved: boolean): Promise<CommentRow> {
  return api.patch(`/api/comments/${seg(commentId)}`, { resolved }, commentSchema)
}
