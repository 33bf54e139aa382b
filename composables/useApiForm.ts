// One way for a form to talk to the API: check the values with the same zod
// schema the route uses (shared/schemas), send them, and read the answer's one
// error shape `{ statusCode, message, errors?: [{ field?, line?, column?, message }] }`
// (server/utils/api.ts) into messages beside the fields they name, with one
// pending flag for the button. Messages come without their "field: " prefix,
// since they are shown beside that field.
// Relative imports so the unit tests can load this module without Nuxt.
import { ref } from 'vue'
import type { z } from 'zod'

export interface ApiIssue { field?: string; line?: number; column?: string; message: string }

/** What the server said, read from an ofetch error (or anything thrown). */
export function apiError(e: unknown): { status: number | null; message: string | null; issues: ApiIssue[] } {
  const err = e as { statusCode?: number; status?: number; data?: { statusCode?: number; message?: unknown; errors?: unknown } } | null
  const data = err?.data
  const issues = Array.isArray(data?.errors)
    ? (data!.errors as unknown[]).filter((x): x is ApiIssue => !!x && typeof (x as ApiIssue).message === 'string')
    : []
  return {
    status: data?.statusCode ?? err?.statusCode ?? err?.status ?? null,
    message: typeof data?.message === 'string' && data.message ? data.message : null,
    issues,
  }
}

/** The server's own words for a failed action (its first field message, else its message), or `fallback`. */
export function apiMessage(e: unknown, fallback: string): string {
  const { message, issues } = apiError(e)
  if (issues.length) return issues.map((i) => i.message).join('; ')
  return message ?? fallback
}

const stripField = (field: string, message: string) => (message.startsWith(`${field}: `) ? message.slice(field.length + 2) : message)

/** Field errors keyed by their full path ('holds.2.sdEastMm') and, if free, by the top field ('holds'). */
export function fieldErrorsOf(issues: ApiIssue[]): { fields: Record<string, string>; rest: string[] } {
  const fields: Record<string, string> = {}
  const rest: string[] = []
  for (const i of issues) {
    if (!i.field) { rest.push(i.message); continue }
    const text = stripField(i.field, i.message)
    fields[i.field] = fields[i.field] ? `${fields[i.field]}; ${text}` : text
    const top = i.field.split('.')[0]!
    if (top !== i.field && !fields[top]) fields[top] = text
  }
  return { fields, rest }
}

export function useApiForm<S extends z.ZodType>(schema: S) {
  const pending = ref(false)
  /** messages by field path */
  const errors = ref<Record<string, string>>({})
  /** a message that belongs to no field (or to the whole form) */
  const problem = ref('')
  const err = (field: string): string | undefined => errors.value[field]

  function reset() {
    errors.value = {}
    problem.value = ''
  }

  /** Checks values with the schema; fills the field errors and returns null when they do not pass. */
  function check(values: unknown): z.output<S> | null {
    reset()
    const parsed = schema.safeParse(values)
    if (parsed.success) return parsed.data
    const { fields, rest } = fieldErrorsOf(parsed.error.issues.map((i) => ({ field: i.path.length ? i.path.join('.') : undefined, message: i.message })))
    errors.value = fields
    problem.value = rest.join('; ') || 'Some fields are not valid: see the marked fields.'
    return null
  }

  /** Reads a failed request into field errors and the form's message. */
  function fail(e: unknown, fallback = 'Could not save.') {
    const { message, issues } = apiError(e)
    const { fields, rest } = fieldErrorsOf(issues)
    errors.value = fields
    problem.value = rest.length ? rest.join('; ') : Object.keys(fields).length ? (message && message !== 'Some fields are not valid' ? message : 'Some fields are not valid: see the marked fields.') : (message ?? fallback)
  }

  /**
   * Checks `values`, then calls `send` with the parsed body while `pending` is
   * true. Returns send's answer, or undefined when the check or the request failed.
   */
  async function submit<T>(values: unknown, send: (body: z.output<S>) => Promise<T>, fallback?: string): Promise<T | undefined> {
    const body = check(values)
    if (body === null) return undefined
    pending.value = true
    try {
      return await send(body)
    } catch (e) {
      fail(e, fallback)
      return undefined
    } finally {
      pending.value = false
    }
  }

  return { pending, errors, problem, err, reset, check, fail, submit }
}
