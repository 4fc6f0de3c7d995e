/** Sheets of a lab: list, create blank or from a sheet file, rename, delete, export. */
import { sheetReply, sheetsReply, type Sheet, type SheetSummary } from '../../shared/schema/api'
import { api, download, seg } from './client'

export type { Sheet, SheetSummary }

export async function listSheets(labId: string): Promise<SheetSummary[]> {
  return (await api.get(`/api/labs/${seg(labId)}/sheets`, sheetsReply)).sheets
}

/** One sheet with its lab's name and the caller's role: `{ id, labId, labName, title, role, createdBy, updatedAt, … }`. */
export function getSheet(sheetId: string): Promise<Sheet> {
  return api.get(`/api/sheets/${seg(sheetId)}`, sheetReply)
}

export function createBlankSheet(labId: string, title: string): Promise<Sheet> {
  return api.post(`/api/labs/${seg(labId)}/sheets`, { title }, sheetReply)
}

/**
 * Imports a sheet file (already parsed from JSON, sent as it was read so the server checks exactly what the person
 * chose). A file with problems fails with ApiError 400 whose `issues` name each problem by JSON path.
 */
export function importSheet(labId: string, file: unknown, title?: string): Promise<Sheet> {
  return api.post(`/api/labs/${seg(labId)}/sheets`, title ? { title, file } : { file }, sheetReply)
}

export function renameSheet(sheetId: string, title: string): Promise<Sheet> {
  return api.patch(`/api/sheets/${seg(sheetId)}`, { title }, sheetReply)
}

export function deleteSheet(sheetId: string): Promise<void> {
  return api.del(`/api/sheets/${seg(sheetId)}`)
}

/** The download address of a sheet's file (`<title>.penumbra.json`, served as an attachment). */
export function sheetFileUrl(sheetId: string): string {
  return `/api/sheets/${seg(sheetId)}/file`
}

/** Downloads the sheet as `<title>.penumbra.json`; resolves to the file name. */
export function exportSheet(sheet: { id: string; title: string }): Promise<string> {
  return download(sheetFileUrl(sheet.id), `${sheet.title.replace(/[\\/:*?"<>|]+/g, '_')}.penumbra.json`)
}
