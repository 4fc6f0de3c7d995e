/**
 * Cross-site request guard: a state-changing request must carry a JSON body or the X-Penumbra-Request header.
 * A cross-site HTML form can send neither (forms post only urlencoded, multipart or text/plain bodies, and setting a
 * custom header or a JSON content type from another origin needs a CORS preflight, which this server never grants).
 */
import type { RequestHandler } from 'express'
import { CSRF_HEADER } from '../../shared/schema/api'
import { forbidden } from '../errors'

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS'])

export function isJsonType(contentType: string | undefined): boolean {
  if (!contentType) return false
  const type = contentType.split(';')[0].trim().toLowerCase()
  return type === 'application/json' || /^application\/[a-z0-9.+-]+\+json$/.test(type)
}

export const csrfGuard: RequestHandler = (req, _res, next) => {
  if (SAFE.has(req.method)) return next()
  if (req.get(CSRF_HEADER) || isJsonType(req.get('content-type'))) return next()
  throw forbidden(`This request needs a JSON body or the ${CSRF_HEADER} header.`)
}
