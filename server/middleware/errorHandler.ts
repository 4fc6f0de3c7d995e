/** The one error path: every thrown error becomes `{ error, issues? }` with its status; unknown errors are 500. */
import type { ErrorRequestHandler, RequestHandler } from 'express'
import { HttpError } from '../errors'

interface BodyParserError extends Error {
  status?: number
  type?: string
  limit?: number
}

interface MulterLikeError extends Error {
  code?: string
  field?: string
}

function sizeLabel(bytes: number | undefined): string {
  return bytes ? `${Math.round(bytes / (1024 * 1024))} MB` : 'the limit'
}

export function errorHandler(maxBodyBytes: number): ErrorRequestHandler {
  return (err: unknown, req, res, next) => {
    if (res.headersSent) return next(err)
    if (err instanceof HttpError) {
      res.status(err.status).json(err.issues ? { error: err.message, issues: err.issues } : { error: err.message })
      return
    }
    const e = err as BodyParserError & MulterLikeError
    if (e?.type === 'entity.parse.failed') {
      res.status(400).json({ error: 'The request body is not valid JSON.', issues: [{ path: '', message: 'not valid JSON' }] })
      return
    }
    if (e?.type === 'entity.too.large' || e?.code === 'LIMIT_FILE_SIZE') {
      res.status(413).json({ error: `The upload is larger than ${sizeLabel(maxBodyBytes)}.` })
      return
    }
    if (e?.name === 'MulterError') {
      res.status(400).json({ error: `The upload was not accepted: ${e.message}${e.field ? ` (field ${e.field})` : ''}.` })
      return
    }
    if (typeof e?.status === 'number' && e.status >= 400 && e.status < 500) {
      res.status(e.status).json({ error: e.message || 'The request was not accepted.' })
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
