/** What each lab role may do (DESIGN §2), for hiding controls. The server enforces the same rules on every request. */
import { LAB_ROLES, type LabRole } from '../../shared/schema/api'

export { LAB_ROLES }
export type { LabRole }

export const ROLE_LABELS: Record<LabRole, string> = {
  owner: 'Owner',
  editor: 'Editor',
  reviewer: 'Reviewer',
  viewer: 'Viewer',
}

export const ROLE_DESCRIPTIONS: Record<LabRole, string> = {
  owner: 'Everything: members and roles, deleting sheets, approving reviews.',
  editor: 'Creates and edits sheets, uploads spectra, freezes snapshots, comments and requests review.',
  reviewer: 'Reads every sheet of the lab live, comments, approves or sends back a review; never edits cells.',
  viewer: 'Reads sheets live and their snapshots; no edits and no comments.',
}

export function canEditSheets(role: LabRole | null | undefined): boolean {
  return role === 'owner' || role === 'editor'
}

export function canManageMembers(role: LabRole | null | undefined): boolean {
  return role === 'owner'
}

/** Owners delete any sheet; an editor deletes the sheets they made. */
export function canDeleteSheet(role: LabRole | null | undefined, createdBy: string, userId: string | undefined): boolean {
  return role === 'owner' || (role === 'editor' && !!userId && createdBy === userId)
}

/** Owners, editors and reviewers comment on cells; viewers read the threads. */
export function canComment(role: LabRole | null | undefined): boolean {
  return role === 'owner' || role === 'editor' || role === 'reviewer'
}

/** Reviewers and owners may be asked for a review and decide it. */
export function canReview(role: LabRole | null | undefined): boolean {
  return role === 'owner' || role === 'reviewer'
}
