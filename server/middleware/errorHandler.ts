/** The one error path: every thrown error becomes `{ error, issues? }` with its status; unknown errors are 500. */
import type { ErrorRequestHandler, RequestHandler } from 'express'
import { HttpError } from '../errors'

interface BodyParserError extends Error {
  status?: number
  type?: string
  limit?: number
  charset?: string
  encoding?: string
}

interface MulterLikeError extends Error {
  code?: string
  field?: string
}

export function sizeLabel(bytes: number | undefined): string {
  if (!bytes) return 'the limit'
  if (bytes >= 1024 * 1024) return `${+(bytes / (1024 * 1024)).toFixed(1)} MB`
  return `${Math.max(1, Math.round(bytes / 1024))} KB`
}

/**
 * What the multipart reader (busboy, under multer) throws as plain errors, without a status, for a body the client got
 * wrong: each becomes a 400 in words. Every route that takes an upload goes through this one handler.
 */
const MULTIPART_PROBLEMS: [RegExp, string][] = [
  [/boundary not found/i, 'the multipart body names no boundary: send it as multipart/form-data with a boundary (a browser form or FormData does this)'],
  [/unexpected end of (form|file|multipart data)/i, 'the multipart body ended before it was complete; send the whole file again'],
  [/malformed part header|malformed (content-disposition|urlencoded)/i, 'a part of the multipart body has a malformed header'],
  [/unsupported content type/i, 'the body is not multipart/form-data'],
]

/** The wording for a multipart reader's error, or null when the error is something else. */
export function multipartProblem(err: unknown): string | null {
  if (!(err instanceof Error) || (err as { status?: unknown }).status !== undefined) return null
  for (const [pattern, message] of MULTIPART_PROBLEMS) if (pattern.test(err.message)) return message
  return null
}

export function errorHandler(maxBodyBytes: number): ErrorRequestHandler {
  return (err: unknown, req, res, next) => {
    if (res.headersSent) return next(err)
    if (err instanceof HttpError) {
      res.status(err.status).json({ ...err.extra, error: err.message, ...(err.issues ? { issues: err.issues } : {}) })
      return
    }
    const e = err as BodyParserError & MulterLikeError
    if (e?.type === 'entity.parse.failed') {
      res.status(400).json({ error: 'The request body is not valid JSON.', issues: [{ path: '', message: 'not valid JSON' }] })
      return
    }
    if (e?.type === 'entity.too.large' || e?.code === 'LIMIT_FILE_SIZE') {
      const what = e.code === 'LIMIT_FILE_SIZE' ? 'The uploaded file' : 'The request body'
      res.status(413).json({ error: `${what} is larger than ${sizeLabel(e.limit ?? maxBodyBytes)}, the most this server accepts.` })
      return
    }
    if (e?.name === 'MulterError') {
      const message =
        e.code === 'LIMIT_UNEXPECTED_FILE'
          ? `send the sheet file in the form field "file"${e.field ? `, not "${e.field}"` : ''}`
          : e.message.charAt(0).toLowerCase() + e.message.slice(1)
      res.status(400).json({ error: `The upload was not accepted: ${message}.`, issues: [{ path: e.field ?? 'file', message }] })
      return
    }
    const multipart = multipartProblem(err)
    if (multipart) {
      res.status(400).json({ error: `The upload was not accepted: ${multipart}.`, issues: [{ path: '', message: multipart }] })
      return
    }
    if (e?.type === 'charset.unsupported') {
      res.status(415).json({ error: `The request body's charset (${e.charset ?? 'unknown'}) is not supported: send UTF-8.` })
      return
    }
    if (e?.type === 'encoding.unsupported') {
      res.status(415).json({ error: `The request body's Content-Encoding (${e.encoding ?? 'unknown'}) is not supported: send it uncompressed, or as gzip, deflate or br.` })
      return
    }
    if (e?.type === 'request.aborted') {
      res.status(400).json({ error: 'The request body ended before it was complete.', issues: [{ path: '', message: 'incomplete body' }] })
      return
    }
    if (typeof e?.status === 'number' && e.status >= 400 && e.status < 500) {
      const message = e.message || 'The request was not accepted.'
      // every 400 names its problems, even one that comes from a library
      res.status(e.status).json(e.status === 400 ? { error: message, issues: [{ path: '', message }] } : { error: message })
      return
    }
    console.error(`${req.method} ${req.originalUrl} failed:`, err)
    res.status(500).json({ error: 'Something went wrong on the server. Please try again.' })
  }
}

/** JSON 404 for any route not matched. */
export const notFoundHandler: RequestHandler = (req, res) => {
  res.status(404).json({ error: `There is nothing at ${req.method} ${req.path}.` })
}
