/**
 * Sheets: list, create (blank or from a sheet file), rename, delete, export. A sheet's cells live in its Yjs
 * document (services/documents.ts); the row here holds its title, lab, author and timestamps.
 */
import { desc, eq, sql } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import { callHook } from '../deps'
import { sheetStates, sheetUpdates, sheets, users, type Role } from '../db/schema'
import { SHEET_FORMAT, SHEET_VERSION, withCellIds, type SheetFile } from '../../shared/schema/sheet'
import { newCellId } from '../../shared/doc/sheetDoc'
import type { Sheet, SheetSummary } from '../../shared/schema/api'
import type { LabRow, SheetRow } from '../types'
import { loadSheetFile, seedDocument } from './documents'
import { newId } from './tokens'
import { inlineDatasets, storeInlineDatasets } from './datasets'

/** Owners may delete any sheet; editors the ones they made. */
export function canDeleteSheet(role: Role | null | undefined, sheet: Pick<SheetRow, 'createdBy'>, userId: string): boolean {
  return role === 'owner' || (role === 'editor' && sheet.createdBy === userId)
}

function authorName(deps: Pick<AppDeps, 'db'>, userId: string): string {
  return deps.db.select({ name: users.name }).from(users).where(eq(users.id, userId)).get()?.name ?? 'a former member'
}

/**
 * When a sheet last changed: its row (create, rename) or its live document (the newest stored update, or the
 * compaction that folded it in), so editing cells moves a sheet up the list without the live layer touching the row.
 */
const lastChange = sql<number>`max(${sheets.updatedAt},
  coalesce((select max(su.created_at) from ${sheetUpdates} su where su.sheet_id = ${sheets.id}), 0),
  coalesce((select ss.updated_at from ${sheetStates} ss where ss.sheet_id = ${sheets.id}), 0))`

function withLastChange(deps: Pick<AppDeps, 'db'>, row: SheetRow): SheetRow {
  const found = deps.db.select({ at: lastChange }).from(sheets).where(eq(sheets.id, row.id)).get()
  return found ? { ...row, updatedAt: Number(found.at) } : row
}

function summary(row: SheetRow, author: string): SheetSummary {
  return { id: row.id, labId: row.labId, title: row.title, createdBy: row.createdBy, authorName: author, createdAt: row.createdAt, updatedAt: row.updatedAt }
}

export function sheetReply(deps: Pick<AppDeps, 'db'>, row: SheetRow, lab: Pick<LabRow, 'name'>, role: Role, userId: string): Sheet {
  return { ...summary(withLastChange(deps, row), authorName(deps, row.createdBy)), labName: lab.name, role, canDelete: canDeleteSheet(role, row, userId) }
}

export function listSheets(deps: Pick<AppDeps, 'db'>, labId: string): SheetSummary[] {
  return deps.db
    .select({ sheet: sheets, author: users.name, lastChange })
    .from(sheets)
    .leftJoin(users, eq(users.id, sheets.createdBy))
    .where(eq(sheets.labId, labId))
    .orderBy(desc(lastChange), desc(sheets.createdAt))
    .all()
    .map((r) => summary({ ...r.sheet, updatedAt: Number(r.lastChange) }, r.author ?? 'a former member'))
}

export function blankSheetFile(title: string): SheetFile {
  return { format: SHEET_FORMAT, version: SHEET_VERSION, title, cells: [] }
}

/** Stores a new sheet and seeds its document with the file's cells (cells without ids get one). */
export function createSheet(deps: Pick<AppDeps, 'db'>, labId: string, userId: string, file: SheetFile): SheetRow {
  const now = Date.now()
  const row: SheetRow = { id: newId(), labId, title: file.title, createdBy: userId, createdAt: now, updatedAt: now }
  deps.db.transaction(() => {
    deps.db.insert(sheets).values(row).run()
    // spectra written into the file become datasets; the document keeps their metadata and ids
    const live = storeInlineDatasets(deps.db, withCellIds(file, newCellId), { labId, sheetId: row.id, userId })
    seedDocument(deps.db, row.id, live)
  })
  return row
}

export function renameSheet(deps: Pick<AppDeps, 'db'>, row: SheetRow, title: string): SheetRow {
  const updatedAt = Date.now()
  deps.db.update(sheets).set({ title, updatedAt }).where(eq(sheets.id, row.id)).run()
  return { ...row, title, updatedAt }
}

export function deleteSheet(deps: AppDeps, sheetId: string): void {
  deps.db.delete(sheets).where(eq(sheets.id, sheetId)).run()
  callHook(deps, 'sheetDeleted', sheetId)
}

/** The sheet file of a stored sheet, titled as the sheet is now, with its datasets' numbers written in. */
export function exportSheet(deps: Pick<AppDeps, 'db'>, row: SheetRow): SheetFile {
  return inlineDatasets(deps.db, loadSheetFile(deps.db, row.id, row.title), row.labId)
}

/**
 * `<title>.penumbra.json`: the title as it is, but for control characters and path separators (`Film B: edge/model`
 * → `Film B: edge model.penumbra.json`); browsers adapt the rest to the file system they save on.
 */
export function downloadName(title: string): string {
  const base = title.replace(/[\\/\u0000-\u001f\u007f]+/g, ' ').replace(/\s+/g, ' ').trim().slice(0, 150) || 'sheet'
  return `${base}.penumbra.json`
}

/** `attachment; filename="<ASCII fallback>"; filename*=UTF-8''<RFC 5987 encoding>` for a download name. */
export function contentDisposition(name: string): string {
  const ascii = name.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, "'")
  const encoded = encodeURIComponent(name).replace(/['()*!]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`)
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encoded}`
}
