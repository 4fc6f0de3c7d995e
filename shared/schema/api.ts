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

/** GET /api/auth/me → 200; also the reply of sign-in, confirm and PATCH /api/auth/me. POST /api/auth/sign-out → 204. */
export const userReply = z.object({ user: userSchema })
export type UserReply = z.infer<typeof userReply>

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
