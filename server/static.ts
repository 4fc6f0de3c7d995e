/**
 * Serves the built client (dist/): hashed assets cached for good, and index.html for every other page address. A
 * sheet's page (`/sheets/:id`) opened by a member of its lab carries the sheet's first view (server/preview.ts).
 */
import express, { Router, type Request } from 'express'
import path from 'node:path'
import { existsSync, readFileSync, statSync } from 'node:fs'
import { PREVIEW_MARKER } from './preview'

/** Paths that never fall back to the client page. */
const NOT_PAGES = /^\/(api|dev|collab)(\/|$)/

/**
 * The built files themselves (scripts, styles, fonts, icons). Mounted before the cookie and session middleware: a
 * file that is the same for everyone needs no session, and a sheet's page asks for dozens of them at once.
 */
export function clientFiles(clientDir: string): Router {
  const r = Router()
  r.use('/assets', express.static(path.join(clientDir, 'assets'), { immutable: true, maxAge: '365d', index: false, fallthrough: true }))
  r.use(express.static(clientDir, { index: false, maxAge: '1h' }))
  return r
}

/** The first view of the page at this address for this request's person, or null (no preview, plain page). */
export type PagePreview = (req: Request) => Promise<string | null>

/** index.html read once per build (its modification time tells a rebuild). */
function pageTemplate(index: string): () => string {
  let cached: { mtimeMs: number; html: string } | null = null
  return () => {
    const { mtimeMs } = statSync(index)
    if (!cached || cached.mtimeMs !== mtimeMs) cached = { mtimeMs, html: readFileSync(index, 'utf8') }
    return cached.html
  }
}

/** index.html for every page address (after the session is known, so a sheet's page can carry its first view). */
export function clientPages(clientDir: string, preview?: PagePreview): Router {
  const r = Router()
  const index = path.join(clientDir, 'index.html')
  const template = pageTemplate(index)
  r.get('/{*splat}', async (req, res, next) => {
    if (NOT_PAGES.test(req.path) || req.path.startsWith('/assets/') || !existsSync(index)) return next()
    if (!req.accepts('html')) return next()
    let first: string | null = null
    try {
      first = preview ? await preview(req) : null
    } catch (err) {
      // the plain page still works: the app loads the sheet itself
      console.warn(`penumbra: no first view for ${req.path}: ${err instanceof Error ? err.message : String(err)}`)
    }
    if (first === null) return void res.set('Cache-Control', 'no-cache').sendFile(index)
    // the page now holds one person's sheet: never stored by a cache, never reused for someone else
    res.set('Cache-Control', 'no-store').set('Vary', 'Cookie').type('html').send(template().replace(PREVIEW_MARKER, () => first))
  })
  return r
}
