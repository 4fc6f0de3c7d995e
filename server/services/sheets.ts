/**
 * Sheets: list, create (blank or from a sheet file), rename, delete, export. A sheet's cells live in its Yjs
 * document (services/documents.ts); the row here holds its title, lab, author and timestamps.
 */
import { desc, eq, sql } from 'drizzle-orm'
import type { AppDeps } from '../deps'
import { callHook } from '../deps'
import { sheetStates, sheetUpdates, sheets, users, type Role } from '../db/tables'
import { SHEET_FORMAT, SHEET_VERSION, withCellIds, type SheetFile } from '../../shared/schema/sheet'
import { newCellId } from '../../shared/doc/sheetDoc'
import type { Sheet, SheetSummary } from '../../shared/schema/api'
import type { LabRow, SheetRow } from '../types'
import { loadSheetFile, seedDocument } from './documents'
import { newId } from './tokens'
import { transact } from '../db/transact'
import { DIALECT } from '../db/dialect'
import { inlineDatasets, storeInlineDatasets } from './datasets'

/** Owners may delete any sheet; editors the ones they made. */
export function canDeleteSheet(role: Role | null | undefined, sheet: Pick<SheetRow, 'createdBy'>, userId: string): boolean {
  return role === 'owner' || (role === 'editor' && sheet.createdBy === userId)
}

async function authorName(deps: Pick<AppDeps, 'db'>, userId: string): Promise<string> {
  return (await deps.db.select({ name: users.name }).from(users).where(eq(users.id, userId)))[0]?.name ?? 'a former member'
}

/**
 * When a sheet last changed: its row (create, rename) or its live document (the newest stored update, or the
 * compaction that folded it in), so editing cells moves a sheet up the list without the live layer touching the row.
 */
const largest = DIALECT === 'pg' ? sql.raw('greatest') : sql.raw('max')
const lastChange = sql<number>`${largest}(${sheets.updatedAt},
  coalesce((select max(su.created_at) from ${sheetUpdates} su where su.sheet_id = ${sheets.id}), 0),
  coalesce((select ss.updated_at from ${sheetStates} ss where ss.sheet_id = ${sheets.id}), 0))`

async function withLastChange(deps: Pick<AppDeps, 'db'>, row: SheetRow): Promise<SheetRow> {
  const [found] = await deps.db.select({ at: lastChange }).from(sheets).where(eq(sheets.id, row.id))
  return found ? { ...row, updatedAt: Number(found.at) } : row
}

function summary(row: SheetRow, author: string): SheetSummary {
  return { id: row.id, labId: row.labId, title: row.title, createdBy: row.createdBy, authorName: author, createdAt: row.createdAt, updatedAt: row.updatedAt }
}

export async function sheetReply(deps: Pick<AppDeps, 'db'>, row: SheetRow, lab: Pick<LabRow, 'name'>, role: Role, userId: string): Promise<Sheet> {
  const updated = await withLastChange(deps, row)
  return { ...summary(updated, await authorName(deps, row.createdBy)), labName: lab.name, role, canDelete: canDeleteSheet(role, row, userId) }
}

export async function listSheets(deps: Pick<AppDeps, 'db'>, labId: string): Promise<SheetSummary[]> {
  const rows = await deps.db
    .select({ sheet: sheets, author: users.name, lastChange })
    .from(sheets)
    .leftJoin(users, eq(users.id, sheets.createdBy))
    .where(eq(sheets.labId, labId))
    .orderBy(desc(lastChange), desc(sheets.createdAt))
  return rows.map((r) => summary({ ...r.sheet, updatedAt: Number(r.lastChange) }, r.author ?? 'a former member'))
}

export function blankSheetFile(title: string): SheetFile {
  return { format: SHEET_FORMAT, version: SHEET_VERSION, title, cells: [] }
}

/** Stores a new sheet and seeds its document with the file's cells (cells without ids get one). */
export async function createSheet(deps: Pick<AppDeps, 'db'>, labId: string, userId: string, file: SheetFile): Promise<SheetRow> {
  const now = Date.now()
  const row: SheetRow = { id: newId(), labId, title: file.title, createdBy: userId, createdAt: now, updatedAt: now }
  const withIds = withCellIds(file, newCellId)
  await transact(deps.db, async (db) => {
    await db.insert(sheets).values(row)
    // spectra written into the file become datasets; the document keeps their metadata and ids
    const live = await storeInlineDatasets(db, withIds, { labId, sheetId: row.id, userId })
    await seedDocument(db, row.id, live)
  })
  return row
}

export async function renameSheet(deps: Pick<AppDeps, 'db'>, row: SheetRow, title: string): Promise<SheetRow> {
  const updatedAt = Date.now()
  await deps.db.update(sheets).set({ title, updatedAt }).where(eq(sheets.id, row.id))
  return { ...row, title, updatedAt }
}

export async function deleteSheet(deps: AppDeps, sheetId: string): Promise<void> {
  await deps.db.delete(sheets).where(eq(sheets.id, sheetId))
  callHook(deps, 'sheetDeleted', sheetId)
}

/** The sheet file of a stored sheet, titled as the sheet is now, with its datasets' numbers written in. */
export async function exportSheet(deps: Pick<AppDeps, 'db'>, row: SheetRow): Promise<SheetFile> {
  return inlineDatasets(deps.db, await loadSheetFile(deps.db, row.id, row.title), row.labId)
}

/**
 * `<title>.penumbra.json`: the title as it is, but for control characters and path separators (`Film B: edge/model`
 * → `Film B: edge model.penumbra.json`); browsers adapt the rest to the file system they save on.
 */
export function downloadName(title: string): string {
  const base = title.replace(/[\\/\p{Cc}]+/gu, ' ').replace(/\s+/g, ' ').trim().slice(0, 150) || 'sheet'
  return `${base}.penumbra.json`
}

/** `attachment; filename="<ASCII fallback>"; filename*=UTF-8''<RFC 5987 encoding>` for a download name. */
export function contentDisposition(name: string): string {
  const ascii = name.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, "'")
  const encoded = encodeURIComponent(name).replace(/['()*!]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`)
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encoded}`
}
