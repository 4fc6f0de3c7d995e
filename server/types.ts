/** What the middleware puts on a request: the signed-in user, and the lab or sheet a route is about. */
import type { SessionFailure, SessionUser } from './services/sessions'
import type { Role } from './db/schema'
import type { labs, sheets, snapshots } from './db/schema'

export type LabRow = typeof labs.$inferSelect
export type SheetRow = typeof sheets.$inferSelect
export type SnapshotRowType = typeof snapshots.$inferSelect

declare module 'express-serve-static-core' {
  interface Request {
    /** The signed-in user, or null (then `sessionFailure` says why, unless no cookie was sent). */
    user?: SessionUser | null
    sessionFailure?: SessionFailure
    /** Set by loadLab / loadSheet: the resource and the caller's role in its lab. */
    lab?: LabRow
    sheet?: SheetRow
    /** Set by loadSnapshot (with its sheet, lab and the caller's role). */
    snapshot?: SnapshotRowType
    role?: Role
  }
}

export {}
