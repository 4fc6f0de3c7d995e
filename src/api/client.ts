/**
 * The typed HTTP client of the app. Every call goes through `request`: it sends JSON with the header that marks our
 * own state-changing requests (shared/schema/api.ts, CSRF rule), turns every failure into an `ApiError` with a plain
 * sentence, and validates replies with the shared zod schemas so a mismatch is caught here, not deep in a view.
 */
import type { ZodType } from 'zod'
import { CSRF_HEADER, errorReply, type ApiIssue } from '../../shared/schema/api'

export type { ApiIssue }

export class ApiError extends Error {
  /** HTTP status; 0 when the server could not be reached. */
  readonly status: number
  /** One entry per problem on a 400 (`path` like `email` or `cells[3].source`). */
  readonly issues: ApiIssue[]

  /** An option of the request that would get past the problem (an upload's `averageDuplicates`, `dropEmptyRows`). */
  offer?: string

  constructor(status: number, message: string, issues: ApiIssue[] = []) {
    super(message)
    this.name = 'ApiError'
    this.status = status
    this.issues = issues
  }
}

/** Called on a 401 from any request not marked `quiet401` (the session ended or expired). */
let unauthorizedHandler: (() => void) | null = null
export function onUnauthorized(handler: (() => void) | null): void {
  unauthorizedHandler = handler
}

export interface RequestOptions {
  /** Do not report a 401 to the unauthorized handler (e.g. asking who is signed in). */
  quiet401?: boolean
  /** Send this FormData instead of a JSON body. */
  form?: FormData
}

const FALLBACK_MESSAGES: Record<number, string> = {
  400: 'The request was not accepted.',
  401: 'Please sign in again: your session has ended.',
  403: 'Your role in this lab does not allow that.',
  404: 'That could not be found. It may have been deleted, or you may no longer have access to it.',
  409: 'That conflicts with the current state. Reload the page and try again.',
  410: 'This link has expired or has already been used.',
  413: 'That is too large to upload.',
  429: 'Too many attempts. Please wait a few minutes and try again.',
}

function fallbackMessage(status: number): string {
  if (FALLBACK_MESSAGES[status]) return FALLBACK_MESSAGES[status]!
  if (status >= 500) return 'The server ran into a problem. Please try again in a moment.'
  return `The server answered with an unexpected status (${status}).`
}

async function request<T>(method: string, path: string, body: unknown, schema: ZodType<T> | null, options: RequestOptions = {}): Promise<T> {
  const headers: Record<string, string> = { Accept: 'application/json' }
  let payload: BodyInit | undefined
  if (method !== 'GET') {
    headers[CSRF_HEADER] = '1'
    if (options.form) payload = options.form
    else if (body !== undefined) {
      headers['Content-Type'] = 'application/json'
      payload = JSON.stringify(body)
    }
  }

  let res: Response
  try {
    res = await fetch(path, { method, headers, body: payload, credentials: 'same-origin' })
  } catch {
    throw new ApiError(0, 'Penumbra could not reach the server. Check your connection and try again.')
  }

  const text = await res.text()
  let json: unknown = undefined
  if (text) {
    try {
      json = JSON.parse(text)
    } catch {
      json = undefined
    }
  }

  if (!res.ok) {
    if (res.status === 401 && !options.quiet401) unauthorizedHandler?.()
    const parsed = errorReply.safeParse(json)
    if (parsed.success) {
      const error = new ApiError(res.status, parsed.data.error, parsed.data.issues ?? [])
      const offer = (json as { offer?: unknown }).offer
      if (typeof offer === 'string') error.offer = offer
      throw error
    }
    throw new ApiError(res.status, fallbackMessage(res.status))
  }

  if (!schema) return undefined as T
  if (json === undefined)
    throw new ApiError(res.status, 'The server sent an empty or unreadable reply. Please reload the page and try again.')
  const parsed = schema.safeParse(json)
  if (!parsed.success) {
    const first = parsed.error.issues[0]
    const where = first ? ` (${first.path.join('.') || 'reply'}: ${first.message})` : ''
    throw new ApiError(res.status, `The server's reply did not have the expected shape${where}. Reload the page; if it persists, the server and this page are from different versions.`)
  }
  return parsed.data
}

export const api = {
  get<T>(path: string, schema: ZodType<T>, options?: RequestOptions): Promise<T> {
    return request('GET', path, undefined, schema, options)
  },
  post<T = void>(path: string, body?: unknown, schema?: ZodType<T> | null, options?: RequestOptions): Promise<T> {
    return request('POST', path, body ?? {}, schema ?? null, options)
  },
  patch<T = void>(path: string, body: unknown, schema?: ZodType<T> | null, options?: RequestOptions): Promise<T> {
    return request('PATCH', path, body, schema ?? null, options)
  },
  del(path: string, options?: RequestOptions): Promise<void> {
    return request('DELETE', path, undefined, null, options)
  },
}

/**
 * Fetches a file the server offers as an attachment and hands it to the browser as a download, so a refusal
 * (403, 404) becomes a readable ApiError instead of a saved error page. Returns the file name used.
 */
export async function download(path: string, fallbackName: string): Promise<string> {
  let res: Response
  try {
    res = await fetch(path, { credentials: 'same-origin' })
  } catch {
    throw new ApiError(0, 'Penumbra could not reach the server. Check your connection and try again.')
  }
  if (!res.ok) {
    if (res.status === 401) unauthorizedHandler?.()
    const parsed = errorReply.safeParse(await res.json().catch(() => undefined))
    throw new ApiError(res.status, parsed.success ? parsed.data.error : fallbackMessage(res.status))
  }
  const disposition = res.headers.get('content-disposition') ?? ''
  const star = /filename\*=UTF-8''([^;]+)/i.exec(disposition)
  const plain = /filename="?([^";]+)"?/i.exec(disposition)
  let name = fallbackName
  try {
    if (star) name = decodeURIComponent(star[1]!)
    else if (plain) name = plain[1]!
  } catch {
    name = fallbackName
  }
  const url = URL.createObjectURL(await res.blob())
  const link = document.createElement('a')
  link.href = url
  link.download = name
  document.body.appendChild(link)
  link.click()
  link.remove()
  setTimeout(() => URL.revokeObjectURL(url), 10_000)
  return name
}

/** Encodes one path segment (ids and tokens come from URLs and must not break out of their segment). */
export function seg(value: string): string {
  return encodeURIComponent(value)
}

/** A readable message for any thrown value, for ElMessage and inline errors. */
export function messageOf(err: unknown): string {
  if (err instanceof ApiError) return err.message
  if (err instanceof Error) return err.message
  return String(err)
}
