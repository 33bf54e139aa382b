// Route helpers: one error shape for the whole API and zod validation that
// names the field. Errors answer `{ statusCode, message, errors? }`.
import type { H3Event } from 'h3'
import { z } from 'zod'

export interface ApiIssue {
  line?: number
  column?: string
  field?: string
  message: string
}

export class ApiError extends Error {
  constructor(
    public statusCode: number,
    message: string,
    public errors?: ApiIssue[],
    public extra?: Record<string, unknown>,
  ) {
    super(message)
  }
}

export const notFound = (what = 'Not found') => new ApiError(404, what)
export const forbidden = (what = 'Your role in this firm may not do this') => new ApiError(403, what)
export const unauthorized = () => new ApiError(401, 'Sign in first (session cookie or Authorization: Bearer token)')

/** Wraps a handler so every thrown error leaves in the documented JSON shape. */
export function defineApiHandler<T>(handler: (event: H3Event) => Promise<T> | T) {
  return defineEventHandler(async (event) => {
    try {
      return await handler(event)
    } catch (error) {
      return sendApiError(event, error)
    }
  })
}

export function sendApiError(event: H3Event, error: unknown) {
  let body: { statusCode: number; message: string; errors?: ApiIssue[]; [k: string]: unknown }
  if (error instanceof ApiError) {
    body = { statusCode: error.statusCode, message: error.message, ...(error.errors ? { errors: error.errors } : {}), ...error.extra }
  } else if (error instanceof z.ZodError) {
    body = { statusCode: 422, message: 'Some fields are not valid', errors: zodIssues(error) }
  } else if (isH3Error(error)) {
    body = { statusCode: error.statusCode, message: error.message || error.statusMessage || 'Request failed' }
  } else {
    console.error('[tiepoint] unexpected error', error)
    body = { statusCode: 500, message: 'Something went wrong on our side; nothing was saved. Please try again.' }
  }
  setResponseStatus(event, body.statusCode)
  return body
}

function isH3Error(e: unknown): e is { statusCode: number; message: string; statusMessage?: string } {
  return typeof e === 'object' && e !== null && 'statusCode' in e && typeof (e as { statusCode: unknown }).statusCode === 'number'
}

export function zodIssues(error: z.ZodError): ApiIssue[] {
  return error.issues.map((i) => ({
    field: i.path.length ? i.path.join('.') : undefined,
    message: i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message,
  }))
}

/** Reads and validates a JSON body; malformed JSON answers 400, invalid fields 422. */
export async function parseBody<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.infer<S>> {
  let raw: unknown
  try {
    raw = await readBody(event)
  } catch {
    throw new ApiError(400, 'The request body is not valid JSON')
  }
  const parsed = schema.safeParse(raw ?? {})
  if (!parsed.success) throw new ApiError(422, 'Some fields are not valid', zodIssues(parsed.error))
  return parsed.data
}

export function parseQuery<S extends z.ZodType>(event: H3Event, schema: S): z.infer<S> {
  const parsed = schema.safeParse(getQuery(event))
  if (!parsed.success) throw new ApiError(422, 'Some query parameters are not valid', zodIssues(parsed.error))
  return parsed.data
}

/** A positive integer route parameter; anything else is simply not found. */
export function idParam(event: H3Event, name: string): number {
  const raw = getRouterParam(event, name) ?? ''
  if (!/^\d{1,9}$/.test(raw)) throw notFound()
  return Number(raw)
}
