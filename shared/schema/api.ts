/**
 * The REST contract between the client and the server: every request body and every reply, as zod schemas with
 * their TypeScript types. The server validates requests with these; the client validates replies with them.
 *
 * Conventions
 * - Errors answer `{ error: "plain sentence" }`; a 400 also carries `issues: [{ path, message }]`, one per problem,
 *   `path` in the sheet schema's dotted/bracket form (`email`, `cells[3].source`).
 * - 401: no valid session. 403: your role may not. 404: it does not exist or is not yours to know of.
 *   409: conflicts (already a member, the last owner). 410: a mailed link that expired or was used. 413: too large.
 *   429: too many attempts.
 * - State-changing requests (POST, PATCH, PUT, DELETE) are accepted only with a JSON body
 *   (`Content-Type: application/json` or `application/*+json`) or with the header `X-Penumbra-Request: 1`,
 *   so that a cross-site form cannot post. The client sends the header on every such request.
 * - The session is an httpOnly cookie (`penumbra_session`); the client never reads it.
 */
import { z } from 'zod'
import { IDENTIFIER, SPECTRUM_QUANTITIES } from './sheet'

/** Lab roles, most powerful first (DESIGN §2). Kept in step with server/db/schema.ts. */
export const LAB_ROLES = ['owner', 'editor', 'reviewer', 'viewer'] as const
export type LabRole = (typeof LAB_ROLES)[number]

/** The header that marks a state-changing request as sent by our own client (see the CSRF rule above). */
export const CSRF_HEADER = 'X-Penumbra-Request'
export const PASSWORD_MIN_LENGTH = 10
export const PASSWORD_MAX_LENGTH = 256
/** Client routes that mailed links open (the SPA serves them; the page then calls the API with the token). */
export const MAIL_LINK_ROUTES = {
  signIn: '/sign-in',
  /** The page that asks for a reset link (no token). */
  requestReset: '/reset',
  confirmSignUp: '/confirm/:token',
  resetPassword: '/reset/:token',
  acceptInvitation: '/invitations/:token',
} as const

// ---------------------------------------------------------------------------------------------------------------
// building blocks

export const roleSchema = z.enum(LAB_ROLES, { message: 'must be one of owner, editor, reviewer, viewer' })
export const emailSchema = z
  .string({ message: 'required' })
  .trim()
  .toLowerCase()
  .max(254, 'must be at most 254 characters')
  .pipe(z.email({ message: 'must be an e-mail address' }))
export const personNameSchema = z
  .string({ message: 'required' })
  .trim()
  .min(1, 'must not be empty')
  .max(100, 'must be at most 100 characters')
export const newPasswordSchema = z
  .string({ message: 'required' })
  .min(PASSWORD_MIN_LENGTH, `must be at least ${PASSWORD_MIN_LENGTH} characters`)
  .max(PASSWORD_MAX_LENGTH, `must be at most ${PASSWORD_MAX_LENGTH} characters`)
export const tokenSchema = z.string({ message: 'required' }).min(16, 'is not a valid link token').max(200, 'is not a valid link token')
export const labNameSchema = z
  .string({ message: 'required' })
  .trim()
  .min(1, 'must not be empty')
  .max(120, 'must be at most 120 characters')
export const sheetTitleSchema = z
  .string({ message: 'required' })
  .trim()
  .min(1, 'must not be empty')
  .max(200, 'must be at most 200 characters')
/** Milliseconds since the epoch. */
export const timestampSchema = z.number().int()

export const issueSchema = z.object({ path: z.string(), message: z.string() })
export type ApiIssue = z.infer<typeof issueSchema>

/** Every error reply. */
export const errorReply = z.object({ error: z.string(), issues: z.array(issueSchema).optional() })
export type ErrorReply = z.infer<typeof errorReply>

/** A reply that only says what happened (sign-up, reset request). */
export const messageReply = z.object({ message: z.string() })
export type MessageReply = z.infer<typeof messageReply>

// ---------------------------------------------------------------------------------------------------------------
// health

/** GET /api/health → 200 */
export const healthReply = z.object({ ok: z.literal(true), version: z.string() })
export type HealthReply = z.infer<typeof healthReply>

// ---------------------------------------------------------------------------------------------------------------
// accounts

export const userSchema = z.object({ id: z.string(), email: z.string(), name: z.string() })
export type User = z.infer<typeof userSchema>

/**
 * POST /api/auth/sign-up → 201 MessageReply, always the same answer whether or not the address has an account.
 * A confirmation link is mailed (MAIL_LINK_ROUTES.confirmSignUp); an address that already has an account gets a
 * mail saying so instead. No cookie is set here and no account exists yet: opening the link (POST /api/auth/confirm)
 * creates it and signs it in; from then on POST /api/auth/sign-in works with the e-mail and password given here.
 * Until then sign-in answers the same 401 as a wrong password (which says to open the mailed link first).
 */
export const signUpBody = z.object({ email: emailSchema, name: personNameSchema, password: newPasswordSchema })
export type SignUpBody = z.infer<typeof signUpBody>

/** POST /api/auth/confirm → 200 UserReply + session cookie (404 unknown link, 410 expired or used, 409 account exists). */
/**
 * The password chosen at sign-up is asked again when the link is opened: only the person who signed up can finish,
 * so a stranger cannot sign up with someone else's address and wait for them to click a link they never asked for.
 */
export const confirmSignUpBody = z.object({
  token: tokenSchema,
  password: z.string({ message: 'required' }).min(1, 'required').max(PASSWORD_MAX_LENGTH),
})
export type ConfirmSignUpBody = z.infer<typeof confirmSignUpBody>

/**
 * POST /api/auth/sign-in → 200 UserReply + session cookie (httpOnly, SameSite=Lax, Secure over https); 401 with one
 * message for a wrong password, an unknown address and an unconfirmed sign-up; 429 after too many failures.
 */
export const signInBody = z.object({
  email: emailSchema,
  password: z.string({ message: 'required' }).min(1, 'required').max(PASSWORD_MAX_LENGTH),
})
export type SignInBody = z.infer<typeof signInBody>

/** The reply of sign-in, confirm and PATCH /api/auth/me (GET /api/auth/me: meReply below). POST /api/auth/sign-out → 204. */
export const userReply = z.object({ user: userSchema })
export type UserReply = z.infer<typeof userReply>

/** GET /api/auth/me → 200 { user } when signed in, 200 { user: null } when no session cookie was sent (401 for an ended session). */
export const meReply = z.object({ user: userSchema.nullable() })
export type MeReply = z.infer<typeof meReply>

/** PATCH /api/auth/me → 200 UserReply */
export const updateMeBody = z.object({ name: personNameSchema })
export type UpdateMeBody = z.infer<typeof updateMeBody>

/** POST /api/auth/password → 204 (403 when the current password is wrong). */
export const changePasswordBody = z.object({
  currentPassword: z.string({ message: 'required' }).min(1, 'required').max(PASSWORD_MAX_LENGTH),
  newPassword: newPasswordSchema,
})
export type ChangePasswordBody = z.infer<typeof changePasswordBody>

/** POST /api/auth/reset-request → 202 MessageReply, the same answer for any address; 429 when rate-limited. */
export const resetRequestBody = z.object({ email: emailSchema })
export type ResetRequestBody = z.infer<typeof resetRequestBody>

/** POST /api/auth/reset → 204 (404 unknown link, 410 expired or used); 429 when rate-limited. */
export const resetBody = z.object({ token: tokenSchema, password: newPasswordSchema })
export type ResetBody = z.infer<typeof resetBody>

// ---------------------------------------------------------------------------------------------------------------
// labs and members

/** GET /api/labs/:labId → 200; POST /api/labs → 201; PATCH /api/labs/:labId → 200. `role` is the caller's. */
export const labReply = z.object({
  id: z.string(),
  name: z.string(),
  role: roleSchema,
  createdAt: timestampSchema,
  memberCount: z.number().int(),
  sheetCount: z.number().int(),
})
export type Lab = z.infer<typeof labReply>

/** GET /api/labs → 200: the caller's labs, by name. */
export const labsReply = z.object({ labs: z.array(labReply) })
export type LabsReply = z.infer<typeof labsReply>

/** POST /api/labs → 201 Lab (the creator is its owner). PATCH /api/labs/:labId (owner) → 200 Lab. */
export const createLabBody = z.object({ name: labNameSchema })
export type CreateLabBody = z.infer<typeof createLabBody>
export const renameLabBody = createLabBody
export type RenameLabBody = CreateLabBody

export const memberSchema = z.object({
  userId: z.string(),
  name: z.string(),
  email: z.string(),
  role: roleSchema,
  joinedAt: timestampSchema,
})
export type Member = z.infer<typeof memberSchema>

/** GET /api/labs/:labId/members → 200 (any member), owners first, then by name. */
export const membersReply = z.object({ members: z.array(memberSchema) })
export type MembersReply = z.infer<typeof membersReply>

/**
 * PATCH /api/labs/:labId/members/:userId {role} (owner) → 200 Member; 409 when it would leave no owner.
 * DELETE /api/labs/:labId/members/:userId → 204: an owner removes anyone, any member removes themself (leave);
 * 409 when it would leave no owner.
 */
export const changeRoleBody = z.object({ role: roleSchema })
export type ChangeRoleBody = z.infer<typeof changeRoleBody>

export const invitationSchema = z.object({
  id: z.string(),
  email: z.string(),
  role: roleSchema,
  invitedBy: z.string(),
  createdAt: timestampSchema,
  expiresAt: timestampSchema,
})
export type Invitation = z.infer<typeof invitationSchema>

/**
 * POST /api/labs/:labId/invitations {email, role} (owner) → 201 Invitation; mails an accept link
 * (MAIL_LINK_ROUTES.acceptInvitation) that expires after 7 days and works once. 409 when that address is already
 * a member. Inviting the same address again replaces the earlier pending invitation.
 */
export const inviteBody = z.object({ email: emailSchema, role: roleSchema })
export type InviteBody = z.infer<typeof inviteBody>

/** GET /api/labs/:labId/invitations (owner) → 200: pending, unexpired invitations. DELETE …/invitations/:id → 204. */
export const invitationsReply = z.object({ invitations: z.array(invitationSchema) })
export type InvitationsReply = z.infer<typeof invitationsReply>

/**
 * GET /api/invitations/:token → 200 (no session needed; the token is the proof): what the link offers.
 * 404 unknown link, 410 expired or used. `accountExists` tells the page whether to offer sign-in or a new account.
 */
export const invitationPreviewReply = z.object({
  labName: z.string(),
  role: roleSchema,
  email: z.string(),
  invitedBy: z.string(),
  expiresAt: timestampSchema,
  accountExists: z.boolean(),
  /** Whether the caller is signed in (then accepting joins with the current account). */
  signedIn: z.boolean(),
})
export type InvitationPreview = z.infer<typeof invitationPreviewReply>

/**
 * POST /api/invitations/:token/accept → 200 AcceptReply.
 * Signed in: body `{}`; the current account joins. Not signed in: body `{ name, password }` creates the account of
 * the invited address and signs it in (sets the cookie); 409 if that address already has an account (sign in
 * first, then accept). 404 unknown link, 410 expired or used, 409 already a member.
 */
export const acceptInvitationBody = z.object({ name: personNameSchema.optional(), password: newPasswordSchema.optional() })
export type AcceptInvitationBody = z.infer<typeof acceptInvitationBody>
export const acceptInvitationReply = z.object({ labId: z.string(), labName: z.string(), role: roleSchema, user: userSchema })
export type AcceptInvitationReply = z.infer<typeof acceptInvitationReply>

// ---------------------------------------------------------------------------------------------------------------
// sheets

export const sheetSummarySchema = z.object({
  id: z.string(),
  labId: z.string(),
  title: z.string(),
  /** The author's user id and name. */
  createdBy: z.string(),
  authorName: z.string(),
  createdAt: timestampSchema,
  updatedAt: timestampSchema,
})
export type SheetSummary = z.infer<typeof sheetSummarySchema>

/** GET /api/labs/:labId/sheets → 200 (any member), most recently updated first. */
export const sheetsReply = z.object({ sheets: z.array(sheetSummarySchema) })
export type SheetsReply = z.infer<typeof sheetsReply>

/**
 * POST /api/labs/:labId/sheets (owner, editor) → 201 Sheet. The body is one of
 *   - `{ title }`: a blank sheet;
 *   - a sheet file itself (`{ format: "penumbra.sheet", version: 1, title, cells }`, as JSON or
 *     `application/vnd.penumbra.sheet+json`);
 *   - `{ title?, file: <sheet file> }` (title overrides the file's);
 *   - multipart/form-data with the file in field `file` (and optional `title`), with the X-Penumbra-Request header.
 * A file with problems answers 400 with every problem in `issues`, by JSON path (`cells[2].value`).
 */
export const createBlankSheetBody = z.object({ title: sheetTitleSchema })
export type CreateBlankSheetBody = z.infer<typeof createBlankSheetBody>

/** GET /api/sheets/:sheetId → 200 (any member). Also the reply of create and rename. */
export const sheetReply = sheetSummarySchema.extend({
  labName: z.string(),
  /** The caller's role in the sheet's lab. */
  role: roleSchema,
  /** Whether the caller may delete this sheet (owner, or the editor who made it). */
  canDelete: z.boolean(),
})
export type Sheet = z.infer<typeof sheetReply>

/** PATCH /api/sheets/:sheetId {title} (owner, editor) → 200 Sheet. DELETE /api/sheets/:sheetId → 204. */
export const renameSheetBody = z.object({ title: sheetTitleSchema })
export type RenameSheetBody = z.infer<typeof renameSheetBody>

/**
 * GET /api/sheets/:sheetId/file (any member) → 200 the sheet file, `Content-Type: application/vnd.penumbra.sheet+json`,
 * `Content-Disposition: attachment; filename="<title>.penumbra.json"`.
 *
 * POST /api/evaluate (signed in) with a sheet file as the body → 200 the engine's result object
 * (shared/schema/result.ts), byte for byte what the command-line evaluator prints. It runs on a worker thread with a
 * budget for the whole sheet (10 s by default, besides the engine's own budget per cell). Errors: 400 with `issues`
 * for malformed JSON or a file with problems; 413 for a file over the evaluate limit (5 MB by default); 422 when the
 * sheet took longer than its budget, more memory than one evaluation may use, or its results would be larger than
 * the route sends (64 MB by default); 503 (with Retry-After) when the
 * server is busy evaluating other sheets.
 */
export const cellResultSchema = z
  .object({
    index: z.number().int(),
    id: z.string().optional(),
    name: z.string().optional(),
    kind: z.string(),
    status: z.enum(['ok', 'error', 'blocked']),
    value: z.unknown().optional(),
    unit: z.string().optional(),
    units: z.record(z.string(), z.string()).optional(),
    dimension: z.string().optional(),
    warnings: z.array(z.string()).optional(),
    error: z.string().optional(),
  })
  .passthrough()
export const evaluationReply = z.object({ title: z.string(), cells: z.array(cellResultSchema), engine: z.string().optional() }).passthrough()
export type EvaluationReply = z.infer<typeof evaluationReply>

// ---------------------------------------------------------------------------------------------------------------
// developer mailbox (only when NODE_ENV !== 'production')

export const devMailSchema = z.object({
  id: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  receivedAt: timestampSchema,
  text: z.string(),
  html: z.string(),
  /** Every http(s) link found in the message, in order. */
  links: z.array(z.string()),
})
export type DevMail = z.infer<typeof devMailSchema>

/** GET /dev/mail.json → 200, newest first. GET /dev/mail is the same list as an HTML page. */
export const devMailReply = z.object({ messages: z.array(devMailSchema) })
export type DevMailReply = z.infer<typeof devMailReply>

// ---------------------------------------------------------------------------------------------------------------
// datasets (measured spectra)

const quantityCode = z.enum(SPECTRUM_QUANTITIES)

/**
 * The `options` field of POST /api/sheets/:sheetId/datasets(/preview): the confirmed mapping (which columns, their
 * names, quantities and units; which sample) and what to do with duplicate x and empty cells.
 */
export const datasetImportOptions = z.object({
  columns: z
    .array(z.object({
      key: z.string().max(16),
      name: z.string().regex(IDENTIFIER, 'must start with a letter and use only letters, digits and _').max(64).optional(),
      quantity: quantityCode.optional(),
      unit: z.string().max(64).optional(),
    }))
    .max(200)
    .optional(),
  sample: z.string().max(200).optional(),
  /** The spectrum's name (the cell's name in formulas); default from the file name. */
  name: z.string().regex(IDENTIFIER, 'must start with a letter and use only letters, digits and _').max(64).optional(),
  averageDuplicates: z.boolean().optional(),
  dropEmptyRows: z.boolean().optional(),
})
export type DatasetImportOptions = z.infer<typeof datasetImportOptions>

/**
 * POST /api/sheets/:sheetId/datasets with a JSON body instead of a file: a spectrum cell's inline columns (from a sheet
 * file imported into an open sheet), stored as they are.
 */
export const inlineDatasetBody = z.object({
  name: z.string().regex(IDENTIFIER, 'must start with a letter and use only letters, digits and _').max(64),
  source: z.string().max(500).optional(),
  columns: z
    .array(z.object({
      name: z.string().regex(IDENTIFIER, 'must start with a letter and use only letters, digits and _').max(64),
      quantity: z.string().max(64).optional(),
      unit: z.string().max(64),
      values: z.array(z.number().nullable()).max(1_000_000),
    }))
    .min(1)
    .max(200)
    .refine((cols) => cols.reduce((n, c) => n + c.values.length, 0) <= 1_000_000, 'more than 1,000,000 numbers in one dataset'),
})
export type InlineDatasetBody = z.infer<typeof inlineDatasetBody>

const nullableNumbers = z.array(z.number().nullable())

export const datasetPreviewReply = z.object({
  columns: z.array(z.object({
    key: z.string(), label: z.string(), quantity: quantityCode, unit: z.string(), guessed: z.boolean(), note: z.string(),
    count: z.number(), min: z.number().nullable(), max: z.number().nullable(),
  })),
  samples: z.array(z.object({ key: z.string(), name: z.string(), columns: z.array(z.string()) })),
  /** The first rows of the numbers (null for an empty cell). */
  rows: z.array(nullableNumbers),
  warnings: z.array(z.string()),
  dialect: z.object({ separator: z.string(), decimal: z.string(), encoding: z.string(), firstLine: z.number(), headerLine: z.number().optional() }),
  /** Every column thinned to at most a few hundred points, by key, for the preview's plot. */
  plot: z.record(z.string(), nullableNumbers),
  /** A name for the spectrum, from the file name. */
  name: z.string(),
  /** The mapping's problem, when the guesses cannot be imported as they are (duplicate x, empty cells …). */
  problem: z.object({ error: z.string(), issues: z.array(issueSchema), offer: z.enum(['averageDuplicates', 'dropEmptyRows']).optional() }).optional(),
})
export type DatasetPreview = z.infer<typeof datasetPreviewReply>
export type DatasetPreviewColumn = DatasetPreview['columns'][number]

export const datasetCreatedReply = z.object({
  id: z.string(),
  name: z.string(),
  source: z.string(),
  sample: z.string(),
  columns: z.array(z.object({ name: z.string(), quantity: z.string(), unit: z.string(), count: z.number(), min: z.number().optional(), max: z.number().optional() })),
  warnings: z.array(z.string()),
})
export type DatasetCreated = z.infer<typeof datasetCreatedReply>

export const datasetReply = z.object({
  id: z.string(),
  name: z.string(),
  source: z.string().nullable(),
  createdAt: z.number(),
  columns: z.array(z.object({ name: z.string(), quantity: z.string().optional(), unit: z.string(), values: nullableNumbers })),
})
export type DatasetReply = z.infer<typeof datasetReply>

// ---------------------------------------------------------------------------------------------------------------
// snapshots (DESIGN §11 item 5)

/** Routes the SPA serves for snapshots and guests (the pages then call the API). */
export const SNAPSHOT_PAGE_ROUTES = {
  /** One snapshot, read-only (mailed review requests and decisions link here). */
  snapshot: '/snapshots/:snapshotId',
  /** A live sheet (mentions link here, with `?cell=<cellId>`). */
  sheet: '/sheets/:sheetId',
  /** A guest link as mailed or handed out: the page calls GET /api/guest/:token. */
  guest: '/guest/:token',
} as const

/** The short code of a snapshot hash shown beside it (the first 10 hex digits of the SHA-256). */
export const SHORT_HASH_LENGTH = 10
export function shortHash(hash: string): string {
  return hash.slice(0, SHORT_HASH_LENGTH)
}

export const REVIEW_STATES = ['open', 'approved', 'changes-requested'] as const
export type ReviewState = (typeof REVIEW_STATES)[number]
export const reviewStateSchema = z.enum(REVIEW_STATES)
export const REVIEW_DECISION_VALUES = ['approved', 'changes-requested'] as const
export const reviewDecisionSchema = z.enum(REVIEW_DECISION_VALUES, { message: 'must be approved or changes-requested' })
export type ReviewDecisionValue = z.infer<typeof reviewDecisionSchema>

const messageText = z.string({ message: 'required' }).trim().max(500, 'must be at most 500 characters')
const noteText = z.string().trim().max(4000, 'must be at most 4000 characters')

/**
 * POST /api/sheets/:sheetId/snapshots {message} (owner, editor) → 201 SnapshotSummary. The server reads the live
 * document, exports its sheet file (datasets inlined), evaluates it with its own engine and stores all of it.
 */
export const createSnapshotBody = z.object({ message: messageText.min(1, 'must not be empty') })
export type CreateSnapshotBody = z.infer<typeof createSnapshotBody>

export const snapshotSummarySchema = z.object({
  id: z.string(),
  sheetId: z.string(),
  labId: z.string(),
  /** SHA-256 (hex) of the canonical sheet file; show `shortHash(hash)`. */
  hash: z.string(),
  createdAt: timestampSchema,
  /** The author's user id, and name. */
  createdBy: z.string(),
  authorName: z.string(),
  message: z.string(),
  engineVersion: z.string(),
  /** The sheet's title when frozen. */
  title: z.string(),
  /** The newest review's state, or null when nobody was asked to review it. */
  reviewState: reviewStateSchema.nullable(),
  /** Open guest links (neither expired nor revoked) and reviews using it: while either is non-zero it cannot be deleted. */
  guestLinkCount: z.number().int(),
  reviewCount: z.number().int(),
})
export type SnapshotSummary = z.infer<typeof snapshotSummarySchema>

/** GET /api/sheets/:sheetId/snapshots (any member) → 200, newest first. */
export const snapshotsReply = z.object({ snapshots: z.array(snapshotSummarySchema) })
export type SnapshotsReply = z.infer<typeof snapshotsReply>

/**
 * GET /api/snapshots/:snapshotId (any member of its lab) → 200: the summary plus the sheet file and the stored
 * result object (DESIGN §5). DELETE /api/snapshots/:snapshotId (owner) → 204; 409 while a review or an open guest
 * link uses it. There is no route that changes a snapshot.
 *
 * GET /api/snapshots/:snapshotId/file → 200 the sheet file with `snapshot: { hash, results, … }`, as a download
 * (`npm run evaluate -- FILE --check` recomputes it).
 * GET /api/snapshots/:snapshotId/cells/:cellId/csv → 200 text/csv of that cell's series (a formula array, a spectrum's
 * columns, a sweep's table, a fit's residuals), as a download; 404 when the cell has no series.
 */
export const snapshotReply = snapshotSummarySchema.extend({
  file: z.object({ format: z.string(), version: z.number(), title: z.string(), cells: z.array(z.record(z.string(), z.unknown())) }).passthrough(),
  results: evaluationReply,
})
export type SnapshotDetail = z.infer<typeof snapshotReply>

/**
 * POST /api/snapshots/:snapshotId/restore {into: "new", title?} (owner, editor) → 201 Sheet: a new sheet in the same
 * lab made from the snapshot's file. Restoring into the live sheet is done by the client (see DEVELOPERS.md): it
 * fetches the snapshot's file and replaces the cells in one Yjs transaction, so the person can undo it.
 */
export const restoreSnapshotBody = z.object({ into: z.literal('new'), title: sheetTitleSchema.optional() })
export type RestoreSnapshotBody = z.infer<typeof restoreSnapshotBody>

/** One word-level piece of a formula's text diff: unchanged, added or removed. */
export const textPartSchema = z.object({ value: z.string(), added: z.boolean().optional(), removed: z.boolean().optional() })
export type TextPart = z.infer<typeof textPartSchema>

export const compareReply = z.object({
  /** Ids and hashes of the two sides; `b` is `live` for the live sheet (its hash is that of its sheet file now). */
  a: z.object({ id: z.string(), hash: z.string(), createdAt: timestampSchema.nullable() }),
  b: z.object({ id: z.string(), hash: z.string(), createdAt: timestampSchema.nullable() }),
  /** Parameter cells whose value or unit changed: values in each side's own unit. */
  parameters: z.array(z.object({ name: z.string(), before: z.number(), after: z.number(), unit: z.string(), unitBefore: z.string().optional() })),
  /** Formula cells whose source changed, with a word-level diff. */
  formulas: z.array(z.object({ name: z.string(), before: z.string(), after: z.string(), diff: z.array(textPartSchema) })),
  /** Other cells whose settings changed (fit windows, sweep ranges, figure traces, note texts…): the changed fields. */
  settings: z.array(z.object({ name: z.string(), kind: z.string(), fields: z.array(z.string()) })),
  /** Cells only in `b` / only in `a`, by name (unnamed cells as `<kind> <id>`). */
  added: z.array(z.string()),
  removed: z.array(z.string()),
  renamed: z.array(z.object({ from: z.string(), to: z.string() })),
  /** Cells whose place in the sheet changed (0-based positions). */
  moved: z.array(z.object({ name: z.string(), from: z.number().int(), to: z.number().int() })),
  /**
   * Results that moved. `change` is the relative change (after − before)/|before| of a scalar, the largest relative
   * change of an array (at `index`), or of a fit's main value; null when not a number (a status change, a new cell).
   * `flagged`: a fit value moved by more than the combined uncertainty √(σ₁² + σ₂²).
   */
  results: z.array(
    z.object({
      name: z.string(),
      kind: z.string(),
      change: z.number().nullable(),
      note: z.string(),
      index: z.number().int().optional(),
      flagged: z.boolean().optional(),
      fit: z.array(z.object({ key: z.string(), before: z.number().nullable(), beforeErr: z.number().nullable(), after: z.number().nullable(), afterErr: z.number().nullable(), flagged: z.boolean() })).optional(),
    }),
  ),
})
export type CompareReply = z.infer<typeof compareReply>

// reviews

/** POST /api/snapshots/:snapshotId/reviews {reviewerIds, note} (owner, editor) → 201 Review. Reviewers must be owners or reviewers of the lab. */
export const createReviewBody = z.object({
  reviewerIds: z.array(z.string().min(1)).min(1, 'name at least one reviewer').max(20),
  note: noteText.default(''),
})
export type CreateReviewBody = z.infer<typeof createReviewBody>

/** PATCH /api/reviews/:reviewId {decision, note} (one of its reviewers) → 200 Review. Deciding again replaces one's decision. */
export const decideReviewBody = z.object({ decision: reviewDecisionSchema, note: noteText.default('') })
export type DecideReviewBody = z.infer<typeof decideReviewBody>

export const reviewerDecisionSchema = z.object({
  reviewerId: z.string(),
  reviewerName: z.string(),
  decision: reviewDecisionSchema.nullable(),
  note: z.string().nullable(),
  decidedAt: timestampSchema.nullable(),
})
export type ReviewerDecision = z.infer<typeof reviewerDecisionSchema>

export const reviewSchema = z.object({
  id: z.string(),
  snapshotId: z.string(),
  snapshotHash: z.string(),
  snapshotMessage: z.string(),
  sheetId: z.string(),
  sheetTitle: z.string(),
  labId: z.string(),
  requestedBy: z.string(),
  requestedByName: z.string(),
  note: z.string(),
  createdAt: timestampSchema,
  /** `changes-requested` when anyone asked for changes, `approved` when everyone approved, else `open`. */
  state: reviewStateSchema,
  decisions: z.array(reviewerDecisionSchema),
})
export type Review = z.infer<typeof reviewSchema>

/**
 * GET /api/labs/:labId/reviews (any member) → 200: `waiting` asks the caller and they have not decided; `requested`
 * were asked by the caller; `decided` are every other review of the lab that is no longer open. Newest first.
 * GET /api/snapshots/:snapshotId/reviews (any member) → 200 { reviews }.
 */
export const reviewQueueReply = z.object({ waiting: z.array(reviewSchema), requested: z.array(reviewSchema), decided: z.array(reviewSchema) })
export type ReviewQueue = z.infer<typeof reviewQueueReply>
export const reviewsReply = z.object({ reviews: z.array(reviewSchema) })
export type ReviewsReply = z.infer<typeof reviewsReply>

// comments

/**
 * POST /api/sheets/:sheetId/comments {cellId, text, snapshotId?, parentId?} (owner, editor, reviewer) → 201 Comment.
 * A reply names its thread's first comment as `parentId` (and inherits its cell and snapshot). `@Name` of a member
 * (their name without spaces, or the part of their e-mail before @) mails them.
 */
export const createCommentBody = z.object({
  cellId: z.string().min(1).max(64),
  text: z.string({ message: 'required' }).trim().min(1, 'must not be empty').max(4000, 'must be at most 4000 characters'),
  snapshotId: z.string().min(1).optional(),
  parentId: z.string().min(1).optional(),
})
export type CreateCommentBody = z.infer<typeof createCommentBody>

/** PATCH /api/comments/:commentId {resolved} (owner, editor, reviewer) → 200 Comment (a thread is resolved on its first comment). */
export const updateCommentBody = z.object({ resolved: z.boolean({ message: 'must be true or false' }) })
export type UpdateCommentBody = z.infer<typeof updateCommentBody>

export const commentSchema = z.object({
  id: z.string(),
  sheetId: z.string(),
  cellId: z.string(),
  /** The snapshot it was made on, or null for the live sheet; the hash lets the live sheet say "on an older version". */
  snapshotId: z.string().nullable(),
  snapshotHash: z.string().nullable(),
  parentId: z.string().nullable(),
  text: z.string(),
  authorId: z.string(),
  authorName: z.string(),
  resolved: z.boolean(),
  createdAt: timestampSchema,
  updatedAt: timestampSchema,
})
export type Comment = z.infer<typeof commentSchema>

/**
 * GET /api/sheets/:sheetId/comments[?snapshotId=…|live] (any member) → 200, oldest first: every comment of the sheet
 * (live and every snapshot's), or only one snapshot's / the live sheet's.
 * GET /api/sheets/:sheetId/comments/events (any member) → text/event-stream: one `comment` event (data: a Comment)
 * each time a comment is made, resolved or reopened on the sheet.
 */
export const commentsReply = z.object({ comments: z.array(commentSchema) })
export type CommentsReply = z.infer<typeof commentsReply>

// guest links

/** POST /api/snapshots/:snapshotId/guest-links {expiresInDays, note} (owner, editor) → 201 GuestLinkCreated (the only time the URL is shown). */
export const createGuestLinkBody = z.object({
  expiresInDays: z.number({ message: 'must be a number of days' }).int('must be a whole number of days').min(1, 'must be at least 1 day').max(90, 'must be at most 90 days'),
  note: z.string().trim().max(500, 'must be at most 500 characters').default(''),
})
export type CreateGuestLinkBody = z.infer<typeof createGuestLinkBody>

export const guestLinkSchema = z.object({
  id: z.string(),
  snapshotId: z.string(),
  note: z.string(),
  createdBy: z.string(),
  createdByName: z.string(),
  createdAt: timestampSchema,
  expiresAt: timestampSchema,
  revokedAt: timestampSchema.nullable(),
  viewCount: z.number().int(),
  lastViewAt: timestampSchema.nullable(),
  state: z.enum(['active', 'expired', 'revoked']),
})
export type GuestLink = z.infer<typeof guestLinkSchema>
export const guestLinkCreatedReply = guestLinkSchema.extend({ url: z.string() })
export type GuestLinkCreated = z.infer<typeof guestLinkCreatedReply>

/** GET /api/snapshots/:snapshotId/guest-links (any member) → 200, newest first. DELETE /api/guest-links/:linkId (owner, editor) → 204, revoked at once. */
export const guestLinksReply = z.object({ links: z.array(guestLinkSchema) })
export type GuestLinksReply = z.infer<typeof guestLinksReply>

/**
 * GET /api/guest/:token (no session) → 200: that one snapshot and nothing else of the lab (no ids of other things,
 * no member names but the author's); 404 unknown link; 410 `{ error }` when expired or revoked.
 */
export const guestSnapshotReply = z.object({
  hash: z.string(),
  title: z.string(),
  message: z.string(),
  authorName: z.string(),
  createdAt: timestampSchema,
  engineVersion: z.string(),
  expiresAt: timestampSchema,
  note: z.string(),
  file: snapshotReply.shape.file,
  results: evaluationReply,
})
export type GuestSnapshot = z.infer<typeof guestSnapshotReply>
