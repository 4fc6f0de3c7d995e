/** Request validation with the shared zod schemas: a failure is a 400 listing every problem by path. */
import type { ZodType } from 'zod'
import { badRequest } from '../errors'
import { toSchemaIssues } from '../../shared/schema/sheet'
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
  const input = value ?? {}
  const parsed = schema.safeParse(input)
  if (parsed.success) return parsed.data
  // the sheet schema's wording (and its "required" / "must be a string, not a number" from the value given)
  const issues = toSchemaIssues(parsed.error, input)
  throw badRequest(issuesSummary(prefix, issues), issues)
}
