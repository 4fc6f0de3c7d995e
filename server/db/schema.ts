/**
 * Every table of Penumbra's relational store. Plural table names, camelCase keys over snake_case columns.
 * Migrations are generated from this file by drizzle-kit into drizzle/ (`npm run db:generate`); never edit them by hand.
 */
import { sqliteTable, text, integer, blob, index, primaryKey } from 'drizzle-orm/sqlite-core'

export const ROLES = ['owner', 'editor', 'reviewer', 'viewer'] as const
export type Role = (typeof ROLES)[number]

const createdAt = () => integer('created_at', { mode: 'number' }).notNull()

export const users = sqliteTable('users', {
  id: text('id').primaryKey(),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  createdAt: createdAt(),
  /**
   * Milliseconds since the epoch: session tokens issued before this (a password reset or change) are refused. Values
   * below 1e11 were written in seconds by older builds and are read as seconds.
   */
  sessionsValidFrom: integer('sessions_valid_from', { mode: 'number' }),
})

export const labs = sqliteTable('labs', {
  id: text('id').primaryKey(),
  name: text('name').notNull(),
  createdBy: text('created_by').notNull().references(() => users.id),
  createdAt: createdAt(),
})

export const memberships = sqliteTable(
  'memberships',
  {
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    role: text('role', { enum: ROLES }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.labId, t.userId] }), index('memberships_user_idx').on(t.userId)],
)

export const invitations = sqliteTable(
  'invitations',
  {
    id: text('id').primaryKey(),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    email: text('email').notNull(),
    role: text('role', { enum: ROLES }).notNull(),
    /** SHA-256 of the token in the mailed link; the token itself is never stored. */
    tokenHash: text('token_hash').notNull().unique(),
    invitedBy: text('invited_by').notNull().references(() => users.id),
    createdAt: createdAt(),
    expiresAt: integer('expires_at', { mode: 'number' }).notNull(),
    acceptedAt: integer('accepted_at', { mode: 'number' }),
    acceptedBy: text('accepted_by').references(() => users.id),
  },
  (t) => [index('invitations_lab_idx').on(t.labId)],
)

export const passwordResets = sqliteTable('password_resets', {
  id: text('id').primaryKey(),
  userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  tokenHash: text('token_hash').notNull().unique(),
  createdAt: createdAt(),
  expiresAt: integer('expires_at', { mode: 'number' }).notNull(),
  usedAt: integer('used_at', { mode: 'number' }),
})

export const sheets = sqliteTable(
  'sheets',
  {
    id: text('id').primaryKey(),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    title: text('title').notNull(),
    createdBy: text('created_by').notNull().references(() => users.id),
    createdAt: createdAt(),
    updatedAt: integer('updated_at', { mode: 'number' }).notNull(),
  },
  (t) => [index('sheets_lab_idx').on(t.labId)],
)

/** Outgoing mail, as handed to the SMTP transport (kept for the developer mailbox and for audit). */
export const mails = sqliteTable('mails', {
  id: text('id').primaryKey(),
  to: text('to').notNull(),
  subject: text('subject').notNull(),
  text: text('text').notNull(),
  html: text('html').notNull(),
  kind: text('kind').notNull(),
  createdAt: createdAt(),
  sentAt: integer('sent_at', { mode: 'number' }),
  error: text('error'),
})

/**
 * The live document's update log: every accepted Yjs update is appended here, synchronously, before it is relayed.
 * `seq` orders updates within a sheet: one more than the sheet's last row, or than its compacted state's `uptoSeq`
 * when compaction left no rows (server/collab/store.ts assigns it in the insert itself, so two writers never share
 * one). The table is keyed by (sheet, seq) and stored WITHOUT ROWID (migration 0005, written by hand: drizzle does not
 * declare it): an append writes one B-tree page, not a rowid table, an index and the AUTOINCREMENT counter.
 */
export const sheetUpdates = sqliteTable(
  'sheet_updates',
  {
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    seq: integer('seq').notNull(),
    update: blob('update', { mode: 'buffer' }).notNull(),
    userId: text('user_id'),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.sheetId, t.seq] })],
)

/** The compacted state of a sheet's document: covers every update with seq ≤ `uptoSeq`. */
export const sheetStates = sqliteTable('sheet_states', {
  sheetId: text('sheet_id').primaryKey().references(() => sheets.id, { onDelete: 'cascade' }),
  state: blob('state', { mode: 'buffer' }).notNull(),
  uptoSeq: integer('upto_seq').notNull(),
  updatedAt: integer('updated_at', { mode: 'number' }).notNull(),
})

/** Signed-out sessions: their token id is refused until it would have expired anyway. */
export const sessionsRevoked = sqliteTable('revoked_sessions', {
  jti: text('jti').primaryKey(),
  expiresAt: integer('expires_at', { mode: 'number' }).notNull(),
})

/**
 * Sign-ups waiting for their mailed confirmation link: the account is created only when the link is opened, so the
 * sign-up answer never tells whether an address already has an account.
 */
export const pendingSignups = sqliteTable('pending_signups', {
  id: text('id').primaryKey(),
  email: text('email').notNull(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  /** SHA-256 of the token in the mailed link. */
  tokenHash: text('token_hash').notNull().unique(),
  createdAt: createdAt(),
  expiresAt: integer('expires_at', { mode: 'number' }).notNull(),
  usedAt: integer('used_at', { mode: 'number' }),
})

/**
 * Measured data uploaded to a lab (the numbers behind spectrum cells). The live document names a dataset by id and
 * carries only its column metadata; the numbers are here, every column's Float64 values (little-endian) one after
 * the other in `values`, in the order and with the counts of `columns`. Rows are never changed: replacing a
 * spectrum's data stores a new dataset, and deleting a cell (or its sheet) leaves the dataset for snapshots.
 */
export const datasets = sqliteTable(
  'datasets',
  {
    id: text('id').primaryKey(),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    /** The sheet it was uploaded to (null once that sheet is deleted). */
    sheetId: text('sheet_id').references(() => sheets.id, { onDelete: 'set null' }),
    name: text('name').notNull(),
    /** The uploaded file's name, or the spectrum cell's source in an imported sheet file. */
    sourceName: text('source_name'),
    uploadedBy: text('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    /** JSON: [{ name, quantity, unit, count }] in the order of `values`. */
    columns: text('columns').notNull(),
    values: blob('values', { mode: 'buffer' }).notNull(),
  },
  (t) => [index('datasets_lab_idx').on(t.labId), index('datasets_sheet_idx').on(t.sheetId)],
)

/**
 * A snapshot: an immutable copy of a sheet with the results the server's engine computed from it. Rows are only ever
 * inserted and (by an owner, when nothing uses them) deleted; no code path updates one.
 * `file` is the canonical sheet file text (sorted keys, datasets inlined) whose SHA-256 is `hash`;
 * `results` is the engine's result object as JSON text, exactly what the command-line evaluator prints for `file`.
 */
export const snapshots = sqliteTable(
  'snapshots',
  {
    id: text('id').primaryKey(),
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    /** The live document's Yjs state when it was frozen (Y.encodeStateAsUpdate). */
    docState: blob('doc_state', { mode: 'buffer' }).notNull(),
    file: text('file').notNull(),
    results: text('results').notNull(),
    engineVersion: text('engine_version').notNull(),
    hash: text('hash').notNull(),
    message: text('message').notNull(),
    createdBy: text('created_by').notNull().references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [index('snapshots_sheet_idx').on(t.sheetId, t.createdAt)],
)

/** Comment threads on a cell of a live sheet (`snapshotId` null) or of a snapshot; replies point at their thread's first comment. */
export const comments = sqliteTable(
  'comments',
  {
    id: text('id').primaryKey(),
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    cellId: text('cell_id').notNull(),
    snapshotId: text('snapshot_id').references(() => snapshots.id, { onDelete: 'cascade' }),
    /** The thread's first comment (null for that first comment itself). */
    parentId: text('parent_id'),
    text: text('text').notNull(),
    authorId: text('author_id').notNull().references(() => users.id),
    /** Kept on the thread's first comment. */
    resolved: integer('resolved', { mode: 'boolean' }).notNull().default(false),
    resolvedBy: text('resolved_by'),
    createdAt: createdAt(),
    updatedAt: integer('updated_at', { mode: 'number' }).notNull(),
  },
  (t) => [index('comments_sheet_idx').on(t.sheetId, t.createdAt)],
)

/** A request that reviewers look at one snapshot. */
export const reviews = sqliteTable(
  'reviews',
  {
    id: text('id').primaryKey(),
    snapshotId: text('snapshot_id').notNull().references(() => snapshots.id, { onDelete: 'cascade' }),
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    requestedBy: text('requested_by').notNull().references(() => users.id),
    note: text('note').notNull(),
    createdAt: createdAt(),
  },
  (t) => [index('reviews_lab_idx').on(t.labId, t.createdAt), index('reviews_snapshot_idx').on(t.snapshotId)],
)

export const REVIEW_DECISIONS = ['approved', 'changes-requested'] as const
export type ReviewDecision = (typeof REVIEW_DECISIONS)[number]

/** One reviewer of one review; `decision` stays null until they decide. A decision is bound to the hash it was made on. */
export const reviewDecisions = sqliteTable(
  'review_decisions',
  {
    reviewId: text('review_id').notNull().references(() => reviews.id, { onDelete: 'cascade' }),
    reviewerId: text('reviewer_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    decision: text('decision', { enum: REVIEW_DECISIONS }),
    note: text('note'),
    /** The snapshot hash the decision was made on. */
    snapshotHash: text('snapshot_hash'),
    decidedAt: integer('decided_at', { mode: 'number' }),
  },
  (t) => [primaryKey({ columns: [t.reviewId, t.reviewerId] }), index('review_decisions_reviewer_idx').on(t.reviewerId)],
)

/** A read-only link to one snapshot for someone without an account. Only the token's SHA-256 is stored. */
export const guestLinks = sqliteTable(
  'guest_links',
  {
    id: text('id').primaryKey(),
    snapshotId: text('snapshot_id').notNull().references(() => snapshots.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    tokenHash: text('token_hash').notNull().unique(),
    note: text('note').notNull(),
    createdBy: text('created_by').notNull().references(() => users.id),
    createdAt: createdAt(),
    expiresAt: integer('expires_at', { mode: 'number' }).notNull(),
    revokedAt: integer('revoked_at', { mode: 'number' }),
    viewCount: integer('view_count').notNull().default(0),
    lastViewAt: integer('last_view_at', { mode: 'number' }),
  },
  (t) => [index('guest_links_snapshot_idx').on(t.snapshotId)],
)
