/**
 * The server's read-only first view of a sheet (server/preview.ts writes it into the page as `#pn-preview`): the
 * cards' names, kinds, units, values and formulas, readable while the app's scripts load. It covers the page below
 * the header and lets clicks through; the live sheet removes it once its own cards are on screen, and so does any
 * other outcome (an error, the connection failing, another page).
 */

const PREVIEW_ID = 'pn-preview'

/** The id of the sheet the preview shows, or null when there is none. */
export function pagePreviewSheet(): string | null {
  if (typeof document === 'undefined') return null
  return document.getElementById(PREVIEW_ID)?.dataset.sheetId ?? null
}

/** Removes the preview (nothing happens when there is none). */
export function dismissPagePreview(): void {
  if (typeof document === 'undefined') return
  document.getElementById(PREVIEW_ID)?.remove()
}
