/** Sheets of a lab: list, create blank or from a sheet file, rename, delete, export. */
import { sheetReply, sheetsReply, type Sheet, type SheetSummary } from '../../shared/schema/api'
import { api, download, seg } from './client'

export type { Sheet, SheetSummary }

export async function listSheets(labId: string): Promise<SheetSummary[]> {
  return (await api.get(`/api/labs/${seg(labId)}/sheets`, sheetsReply)).sheets
}

/**
 * Requests for one sheet that are on their way: the header and the page ask at once and share one request. A request
 * the route guard started ahead of the page is kept a few seconds after its answer, for the page that asked for it.
 */
const inFlight = new Map<string, Promise<Sheet>>()
/** How long an answer read ahead of its page is reused (the page's scripts take about a second to start here). */
const READ_AHEAD_KEPT_MS = 5000

function readSheet(sheetId: string, quiet401: boolean, keepMs = 0): Promise<Sheet> {
  const pending = inFlight.get(sheetId)
  if (pending) return pending
  const request = api.get(`/api/sheets/${seg(sheetId)}`, sheetReply, { quiet401 })
  inFlight.set(sheetId, request)
  const forget = () => {
    if (inFlight.get(sheetId) === request) inFlight.delete(sheetId)
  }
  const settled = () => (keepMs > 0 ? setTimeout(forget, keepMs) : forget())
  request.then(settled, forget)
  return request
}

/** One sheet with its lab's name and the caller's role: `{ id, labId, labName, title, role, createdBy, updatedAt, … }`. */
export function getSheet(sheetId: string): Promise<Sheet> {
  return readSheet(sheetId, false)
}

/**
 * Starts reading a sheet before its page asks for it (the route guard calls this while it checks the session), so the
 * page's own getSheet joins a request already on its way. Quiet: a signed-out visitor is sent to sign in by the guard.
 */
export function prefetchSheet(sheetId: string): void {
  readSheet(sheetId, true, READ_AHEAD_KEPT_MS).catch(() => undefined)
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
  inFlight.delete(sheetId)
  return api.patch(`/api/sheets/${seg(sheetId)}`, { title }, sheetReply)
}

export function deleteSheet(sheetId: string): Promise<void> {
  inFlight.delete(sheetId)
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
