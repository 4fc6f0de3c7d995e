/** Request validation with the shared zod schemas: a failure is a 400 listing every problem by path. */
import type { ZodType } from 'zod'
import { badRequest } from '../errors'
import { formatPath } from '../../shared/schema/sheet'
import type { ApiIssue } from '../../shared/schema/api'

export function issuesSummary(prefix: string, issues: ApiIssue[]): string {
  const first = issues[0]
  if (!first) return prefix
  const where = first.path ? `${first.path} ${first.message}` : first.message
  const more = issues.length > 1 ? ` (and ${issues.length - 1} more)` : ''
  return `${prefix}: ${where}${more}.`
}

/** Parses a value with a schema or throws a 400 whose `issues` name each field. */
export function parse<T>(schema: ZodType<T>, value: unknown, prefix = 'The request was not accepted'): T {
  const parsed = schema.safeParse(value ?? {})
  if (parsed.success) return parsed.data
  const issues = parsed.error.issues.map((i) => ({ path: formatPath(i.path), message: i.message }))
  throw badRequest(issuesSummary(prefix, issues), issues)
}
