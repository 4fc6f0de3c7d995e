/**
 * Form validation for Element Plus forms from the shared zod schemas, plus the server's per-field problems
 * (`ApiError.issues`) shown under the field they concern.
 */
import { reactive } from 'vue'
import type { FormItemRule } from 'element-plus'
import type { ZodType } from 'zod'
import { ApiError } from '@/api/client'

/** "must be at least 10 characters" → "Must be at least 10 characters." */
export function sentence(message: string): string {
  const text = message.trim()
  if (!text) return text
  const first = text[0]!.toUpperCase() + text.slice(1)
  return /[.!?]$/.test(first) ? first : `${first}.`
}

/** An Element Plus rule that checks a field with a shared zod schema (same rule the server applies). */
export function schemaRule(schema: ZodType, message?: string, trigger: 'blur' | 'change' = 'blur'): FormItemRule {
  return {
    trigger,
    validator: (_rule, value, callback) => {
      const parsed = schema.safeParse(value)
      if (parsed.success) callback()
      else callback(new Error(message ?? sentence(parsed.error.issues[0]?.message ?? 'is not valid')))
    },
  }
}

/** Field errors from the server, by field name, bound to `ElFormItem :error`. */
export function useFormErrors<K extends string>(fields: readonly K[]) {
  const errors = reactive<Record<string, string>>(Object.fromEntries(fields.map((f) => [f, '']))) as Record<K, string>

  function clear(): void {
    for (const f of fields) errors[f] = ''
  }

  /** Puts each server issue under its field; returns true when at least one landed on a field. */
  function fromError(err: unknown): boolean {
    clear()
    if (!(err instanceof ApiError)) return false
    let placed = false
    for (const issue of err.issues) {
      const field = issue.path.split(/[.[]/)[0] as K
      if ((fields as readonly string[]).includes(field)) {
        errors[field] = sentence(issue.message)
        placed = true
      }
    }
    return placed
  }

  return { errors, clear, fromError }
}
