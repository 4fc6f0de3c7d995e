/** Serves the built client (dist/): hashed assets cached for good, and index.html for every other page address. */
import express, { Router } from 'express'
import path from 'node:path'
import { existsSync } from 'node:fs'

/** Paths that never fall back to the client page. */
const NOT_PAGES = /^\/(api|dev|collab)(\/|$)/

export function clientRoutes(clientDir: string): Router {
  const r = Router()
  const index = path.join(clientDir, 'index.html')
  r.use('/assets', express.static(path.join(clientDir, 'assets'), { immutable: true, maxAge: '365d', index: false, fallthrough: true }))
  r.use(express.static(clientDir, { index: false, maxAge: '1h' }))
  r.get('/{*splat}', (req, res, next) => {
    if (NOT_PAGES.test(req.path) || req.path.startsWith('/assets/') || !existsSync(index)) return next()
    if (!req.accepts('html')) return next()
    res.set('Cache-Control', 'no-cache').sendFile(index)
  })
  return r
}
