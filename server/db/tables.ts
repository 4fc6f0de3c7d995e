/**
 * The tables services query: schema.ts's on SQLite, schema.pg.ts's on PostgreSQL (chosen once per process from
 * DATABASE_URL, see dialect.ts). Both are typed as the SQLite tables so services keep one set of types; the two
 * schemas have the same tables, columns and TypeScript types (tests/server/schemaLockstep.test.ts).
 */
import * as sqliteTables from './schema'
import * as pgTables from './schema.pg'
import { DIALECT } from './dialect'

type Tables = Pick<typeof sqliteTables, keyof typeof pgTables & keyof typeof sqliteTables>

const active = (DIALECT === 'pg' ? pgTables : sqliteTables) as unknown as Tables

export const {
  users,
  labs,
  memberships,
  invitations,
  passwordResets,
  sheets,
  mails,
  sheetUpdates,
  sheetStates,
  sessionsRevoked,
  pendingSignups,
  datasets,
  snapshots,
  comments,
  reviews,
  reviewDecisions,
  guestLinks,
} = active

export { ROLES, REVIEW_DECISIONS, type Role, type ReviewDecision } from './schema'
