/** The one error type handlers throw: the error handler turns it into `{ error, issues? }` with its status. */
import type { ApiIssue } from '../shared/schema/api'

export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly issues?: ApiIssue[],
    /** More fields for the reply body (e.g. `offer`: an option that would get past the problem). */
    readonly extra?: Record<string, unknown>,
  ) {
    super(message)
    this.name = 'HttpError'
  }
}

export const badRequest = (message: string, issues?: ApiIssue[]) => new HttpError(400, message, issues)
export const unauthorized = (message = 'Sign in first.') => new HttpError(401, message)
export const forbidden = (message: string) => new HttpError(403, message)
export const notFound = (message: string) => new HttpError(404, message)
export const conflict = (message: string) => new HttpError(409, message)
export const gone = (message: string) => new HttpError(410, message)
