/**
 * Loaders for a route's lab or sheet. A lab or sheet that does not exist, or whose lab the caller is not a member
 * of, answers 404 (its existence is not theirs to know); a member whose role may not answers 403.
 */
import type { RequestHandler } from 'express'
import type { AppDeps } from '../deps'
import type { Role } from '../db/schema'
import { roleInLab, sheetAccess } from '../services/access'
import { labById } from '../services/labs'
import { snapshotById } from '../services/snapshots'
import { forbidden, notFound, unauthorized } from '../errors'

const NO_LAB = 'No such lab, or you are not a member of it.'
const NO_SHEET = 'No such sheet, or you are not a member of its lab.'

export function loadLab(deps: AppDeps, param = 'labId'): RequestHandler {
  return async (req, _res, next) => {
    if (!req.user) throw unauthorized()
    const lab = await labById(deps, String(req.params[param]))
    const role = lab ? await roleInLab(deps.db, lab.id, req.user.id) : null
    if (!lab || !role) throw notFound(NO_LAB)
    req.lab = lab
    req.role = role
    next()
  }
}

export function loadSheet(deps: AppDeps, param = 'sheetId'): RequestHandler {
  return async (req, _res, next) => {
    if (!req.user) throw unauthorized()
    const { sheet, role } = await sheetAccess(deps.db, String(req.params[param]), req.user.id)
    if (!sheet || !role) throw notFound(NO_SHEET)
    const lab = await labById(deps, sheet.labId)
    if (!lab) throw notFound(NO_SHEET)
    req.sheet = sheet
    req.lab = lab
    req.role = role
    next()
  }
}

/** After loadLab/loadSheet: only these roles pass; the message says who may. */
export function allowRoles(roles: readonly Role[], message: string): RequestHandler {
  return (req, _res, next) => {
    if (!req.role || !roles.includes(req.role)) throw forbidden(message)
    next()
  }
}

const NO_SNAPSHOT = 'No such snapshot, or you are not a member of its lab.'

/** A snapshot, its sheet and lab, and the caller's role there (404 for a missing snapshot or a non-member). */
export function loadSnapshot(deps: AppDeps, param = 'snapshotId'): RequestHandler {
  return async (req, _res, next) => {
    if (!req.user) throw unauthorized()
    const snapshot = await snapshotById(deps.db, String(req.params[param]))
    const { sheet, role } = snapshot ? await sheetAccess(deps.db, snapshot.sheetId, req.user.id) : { sheet: null, role: null }
    const lab = sheet ? await labById(deps, sheet.labId) : undefined
    if (!snapshot || !sheet || !role || !lab) throw notFound(NO_SNAPSHOT)
    req.snapshot = snapshot
    req.sheet = sheet
    req.lab = lab
    req.role = role
    next()
  }
}
