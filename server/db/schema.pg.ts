/**
 * The same tables as schema.ts for PostgreSQL (the scale-out configuration, chosen by DATABASE_URL=postgres://…).
 * Table and column names, keys, unique constraints, indexes, foreign keys and their delete rules match schema.ts one
 * for one (tests/server/schemaLockstep.test.ts compares the two); the column types are PostgreSQL's equivalents with
 * the same TypeScript types: millisecond times are bigint read as numbers, blobs are bytea read as Buffers, the
 * boolean-mode integer is a boolean. Migrations are generated into drizzle/pg/ by `npm run db:generate`.
 */
import { pgTable, text, bigint, integer, boolean, index, primaryKey, customType } from 'drizzle-orm/pg-core'
import { ROLES, REVIEW_DECISIONS } from './schema'

/** bytea as a Buffer, the same value better-sqlite3 gives for a blob in 'buffer' mode. */
const bytea = customType<{ data: Buffer; driverData: Buffer }>({
  dataType: () => 'bytea',
  toDriver: (value) => value,
  fromDriver: (value) => (Buffer.isBuffer(value) ? value : Buffer.from(value as Uint8Array)),
})

/** Milliseconds since the epoch (beyond 32 bits), read as a JavaScript number. */
const ms = (name: string) => bigint(name, { mode: 'number' })
const createdAt = () => ms('created_at').notNull()

export const users = pgTable('users', {
  id: text('id').primaryKey(),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  createdAt: createdAt(),
  sessionsValidFrom: ms('sessions_valid_from'),
})

export const labs = pgTable('labs', {
  id: text('id').primaryKey(),
  name: text('name').notNull(),
  createdBy: text('created_by').notNull().references(() => users.id),
  createdAt: createdAt(),
})

export const memberships = pgTable(
  'memberships',
  {
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    role: text('role', { enum: ROLES }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.labId, t.userId] }), index('memberships_user_idx').on(t.userId)],
)

export const invitations = pgTable(
  'invitations',
  {
    id: text('id').primaryKey(),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    email: text('email').notNull(),
    role: text('role', { enum: ROLES }).notNull(),
    tokenHash: text('token_hash').notNull().unique(),
    invitedBy: text('invited_by').notNull().references(() => users.id),
    createdAt: createdAt(),
    expiresAt: ms('expires_at').notNull(),
    acceptedAt: ms('accepted_at'),
    acceptedBy: text('accepted_by').references(() => users.id),
  },
  (t) => [index('invitations_lab_idx').on(t.labId)],
)

export const passwordResets = pgTable('password_resets', {
  id: text('id').primaryKey(),
  userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  tokenHash: text('token_hash').notNull().unique(),
  createdAt: createdAt(),
  expiresAt: ms('expires_at').notNull(),
  usedAt: ms('used_at'),
})

export const sheets = pgTable(
  'sheets',
  {
    id: text('id').primaryKey(),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    title: text('title').notNull(),
    createdBy: text('created_by').notNull().references(() => users.id),
    createdAt: createdAt(),
    updatedAt: ms('updated_at').notNull(),
  },
  (t) => [index('sheets_lab_idx').on(t.labId)],
)

export const mails = pgTable('mails', {
  id: text('id').primaryKey(),
  to: text('to').notNull(),
  subject: text('subject').notNull(),
  text: text('text').notNull(),
  html: text('html').notNull(),
  kind: text('kind').notNull(),
  createdAt: createdAt(),
  sentAt: ms('sent_at'),
  error: text('error'),
})

/** The live document's update log, keyed by (sheet, seq) as in schema.ts. */
export const sheetUpdates = pgTable(
  'sheet_updates',
  {
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    seq: integer('seq').notNull(),
    update: bytea('update').notNull(),
    userId: text('user_id'),
    createdAt: createdAt(),
  },
  (t) => [primaryKey({ columns: [t.sheetId, t.seq] })],
)

export const sheetStates = pgTable('sheet_states', {
  sheetId: text('sheet_id').primaryKey().references(() => sheets.id, { onDelete: 'cascade' }),
  state: bytea('state').notNull(),
  uptoSeq: integer('upto_seq').notNull(),
  updatedAt: ms('updated_at').notNull(),
})

export const sessionsRevoked = pgTable('revoked_sessions', {
  jti: text('jti').primaryKey(),
  expiresAt: ms('expires_at').notNull(),
})

export const pendingSignups = pgTable('pending_signups', {
  id: text('id').primaryKey(),
  email: text('email').notNull(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  createdAt: createdAt(),
  expiresAt: ms('expires_at').notNull(),
  usedAt: ms('used_at'),
})

export const datasets = pgTable(
  'datasets',
  {
    id: text('id').primaryKey(),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    sheetId: text('sheet_id').references(() => sheets.id, { onDelete: 'set null' }),
    name: text('name').notNull(),
    sourceName: text('source_name'),
    uploadedBy: text('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    columns: text('columns').notNull(),
    values: bytea('values').notNull(),
  },
  (t) => [index('datasets_lab_idx').on(t.labId), index('datasets_sheet_idx').on(t.sheetId)],
)

export const snapshots = pgTable(
  'snapshots',
  {
    id: text('id').primaryKey(),
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    docState: bytea('doc_state').notNull(),
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

export const comments = pgTable(
  'comments',
  {
    id: text('id').primaryKey(),
    sheetId: text('sheet_id').notNull().references(() => sheets.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    cellId: text('cell_id').notNull(),
    snapshotId: text('snapshot_id').references(() => snapshots.id, { onDelete: 'cascade' }),
    parentId: text('parent_id'),
    text: text('text').notNull(),
    authorId: text('author_id').notNull().references(() => users.id),
    resolved: boolean('resolved').notNull().default(false),
    resolvedBy: text('resolved_by'),
    createdAt: createdAt(),
    updatedAt: ms('updated_at').notNull(),
  },
  (t) => [index('comments_sheet_idx').on(t.sheetId, t.createdAt)],
)

export const reviews = pgTable(
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

export const reviewDecisions = pgTable(
  'review_decisions',
  {
    reviewId: text('review_id').notNull().references(() => reviews.id, { onDelete: 'cascade' }),
    reviewerId: text('reviewer_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    decision: text('decision', { enum: REVIEW_DECISIONS }),
    note: text('note'),
    snapshotHash: text('snapshot_hash'),
    decidedAt: ms('decided_at'),
  },
  (t) => [primaryKey({ columns: [t.reviewId, t.reviewerId] }), index('review_decisions_reviewer_idx').on(t.reviewerId)],
)

export const guestLinks = pgTable(
  'guest_links',
  {
    id: text('id').primaryKey(),
    snapshotId: text('snapshot_id').notNull().references(() => snapshots.id, { onDelete: 'cascade' }),
    labId: text('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
    tokenHash: text('token_hash').notNull().unique(),
    note: text('note').notNull(),
    createdBy: text('created_by').notNull().references(() => users.id),
    createdAt: createdAt(),
    expiresAt: ms('expires_at').notNull(),
    revokedAt: ms('revoked_at'),
    viewCount: integer('view_count').notNull().default(0),
    lastViewAt: ms('last_view_at'),
  },
  (t) => [index('guest_links_snapshot_idx').on(t.snapshotId)],
)
