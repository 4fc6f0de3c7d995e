/**
 * Replies of the snapshot, compare, comment, review and guest-link routes (issue 9, item 8), as the client reads them.
 * People are `{ id, name }`; a reply that names a person by id only is read as `{ id, name: '' }` so a view can
 * fall back to the members list.
 */
import { z } from 'zod'
import { cellResultSchema, timestampSchema } from './api'
import type { CellResult } from './result'

export const REVIEW_STATES = ['open', 'approved', 'changes-requested'] as const
export type ReviewState = (typeof REVIEW_STATES)[number]
export const DECISIONS = ['approved', 'changes-requested'] as const
export type Decision = (typeof DECISIONS)[number]

/** A person named by id, or by id and name. */
export const personRef = z.union([
  z.string().transform((id) => ({ id, name: '' })),
  z.object({ id: z.string(), name: z.string() }),
])
export type PersonRef = z.infer<typeof personRef>

const optionalTime = timestampSchema.nullable().optional()

// --- snapshots ---------------------------------------------------------------------------------------------------

export const snapshotSummary = z.looseObject({
  id: z.string(),
  sheetId: z.string().optional(),
  hash: z.string(),
  createdAt: timestampSchema,
  createdBy: personRef,
  /** The author's name when `createdBy` is only an id. */
  authorName: z.string().optional(),
  message: z.string(),
  engineVersion: z.string(),
  /** The state of the latest review of this snapshot, none when nobody was asked. */
  reviewState: z.enum(REVIEW_STATES).nullable().optional(),
})
export type SnapshotSummary = z.infer<typeof snapshotSummary>

export const snapshotsReply = z.object({ snapshots: z.array(snapshotSummary) })

/** The stored result object (DESIGN §5); each cell's value is checked by the views that draw it. */
export const snapshotResults = z.looseObject({
  title: z.string().optional(),
  cells: z.array(cellResultSchema).transform((cells) => cells as unknown as CellResult[]),
  engine: z.string().optional(),
})

/** GET /api/snapshots/:id and GET /api/guest/:token: the summary with the sheet file and its stored results. */
export const snapshotDetail = snapshotSummary.extend({
  title: z.string().optional(),
  labId: z.string().optional(),
  file: z.looseObject({ title: z.string().optional(), cells: z.array(z.unknown()) }),
  results: snapshotResults,
})
export type SnapshotDetail = z.infer<typeof snapshotDetail>

/** GET /api/guest/:token: the snapshot, either bare or under `snapshot`. */
export const guestReply = z.union([z.looseObject({ snapshot: snapshotDetail }), snapshotDetail.transform((snapshot) => ({ snapshot }))])

// --- compare -----------------------------------------------------------------------------------------------------

export const compareReply = z.looseObject({
  parameters: z.array(z.looseObject({ name: z.string(), before: z.unknown(), after: z.unknown(), unit: z.string().nullable().optional() })),
  formulas: z.array(z.looseObject({ name: z.string(), before: z.string().nullable(), after: z.string().nullable() })),
  added: z.array(z.string()),
  removed: z.array(z.string()),
  renamed: z.array(z.looseObject({ from: z.string(), to: z.string() })).optional(),
  moved: z.array(z.union([z.string(), z.looseObject({ name: z.string() })])).optional(),
  results: z.array(z.looseObject({ name: z.string(), change: z.unknown(), note: z.string().nullable().optional() })),
})
export type CompareReply = z.infer<typeof compareReply>

// --- comments ----------------------------------------------------------------------------------------------------

export const commentSchema = z.looseObject({
  id: z.string(),
  sheetId: z.string().optional(),
  cellId: z.string(),
  snapshotId: z.string().nullable().optional(),
  parentId: z.string().nullable().optional(),
  author: personRef.optional(),
  authorId: z.string().optional(),
  authorName: z.string().optional(),
  text: z.string(),
  createdAt: timestampSchema,
  resolved: z.boolean().optional(),
  resolvedAt: optionalTime,
})
export type CommentRow = z.infer<typeof commentSchema>
export const commentsReply = z.object({ comments: z.array(commentSchema) })

// --- reviews -----------------------------------------------------------------------------------------------------

export const reviewerEntry = z.looseObject({
  id: z.string().optional(),
  userId: z.string().optional(),
  name: z.string().optional(),
  decision: z.enum(DECISIONS).nullable().optional(),
  note: z.string().nullable().optional(),
  decidedAt: optionalTime,
})

export const reviewSchema = z.looseObject({
  id: z.string(),
  snapshotId: z.string(),
  sheetId: z.string().optional(),
  sheetTitle: z.string().optional(),
  hash: z.string().optional(),
  snapshotMessage: z.string().optional(),
  requestedBy: personRef.optional(),
  note: z.string().nullable().optional(),
  createdAt: timestampSchema.optional(),
  state: z.enum(REVIEW_STATES),
  /** Who was asked, each with their decision (one review may ask several people). */
  reviewers: z.array(reviewerEntry).optional(),
  /** A review row per reviewer: who, and their decision. */
  reviewer: personRef.optional(),
  decision: z.enum(DECISIONS).nullable().optional(),
  decisionNote: z.string().nullable().optional(),
  decidedAt: optionalTime,
})
export type ReviewRow = z.infer<typeof reviewSchema>
export const reviewsReply = z.object({ reviews: z.array(reviewSchema) })

// --- guest links -------------------------------------------------------------------------------------------------

export const guestLinkSchema = z.looseObject({
  id: z.string(),
  url: z.string().optional(),
  snapshotId: z.string().optional(),
  expiresAt: timestampSchema,
  note: z.string().nullable().optional(),
  createdAt: timestampSchema.optional(),
  viewCount: z.number().int().optional(),
  lastViewAt: optionalTime,
  revokedAt: optionalTime,
})
export type GuestLinkRow = z.infer<typeof guestLinkSchema>
export const guestLinksReply = z.object({ links: z.array(guestLinkSchema) })
