/**
 * Every route of an Express app, read from its router stack (mounted routers included), so a test that walks them
 * covers routes added later without being told.
 */
import type { Express } from 'express'

export interface AppRoute {
  method: string
  /** The full path pattern, e.g. `/api/labs/:labId/sheets`. */
  path: string
}

interface Layer {
  route?: { path: string | string[]; methods: Record<string, boolean> }
  rawPath?: string | string[]
  handle?: { stack?: Layer[] }
}

function join(base: string, part: string): string {
  if (part === '/' || part === '') return base || '/'
  return `${base.replace(/\/$/, '')}${part.startsWith('/') ? '' : '/'}${part}`
}

function walk(stack: Layer[], base: string, out: AppRoute[]): void {
  for (const layer of stack) {
    if (layer.route) {
      for (const p of [layer.route.path].flat())
        for (const [method, on] of Object.entries(layer.route.methods)) if (on && method !== '_all') out.push({ method: method.toUpperCase(), path: join(base, p) })
    } else if (layer.handle?.stack && typeof layer.rawPath === 'string') walk(layer.handle.stack, join(base, layer.rawPath), out)
  }
}

export function appRoutes(app: Express): AppRoute[] {
  const router = (app as unknown as { router: { stack: Layer[] } }).router
  const out: AppRoute[] = []
  walk(router.stack, '', out)
  return out
}

/** A route's path with each `:param` replaced by `fill(name)`. */
export function fillPath(path: string, fill: (param: string) => string): string {
  return path.replace(/:(\w+)/g, (_all, name: string) => encodeURIComponent(fill(name)))
}
