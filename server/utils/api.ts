// The API's one error shape: every error leaves as `{ statusCode, message, errors? }`.
// Domain errors (server/utils/errors.ts) are mapped to their status by the
// table there; zod errors name the field; anything unexpected is a 500 that
// says nothing was saved and is logged.
import type { H3Event } from 'h3'
import { z } from 'zod'
import { DomainError, ThrottledError, notFound } from './errors'
import type { ApiIssue } from './errors'

export function sendApiError(event: H3Event, error: unknown) {
  let body: { statusCode: number; message: string; errors?: ApiIssue[]; [k: string]: unknown }
  if (error instanceof DomainError) {
    body = { statusCode: error.statusCode, message: error.message, ...(error.errors ? { errors: error.errors } : {}), ...error.extra }
    if (error instanceof ThrottledError) setResponseHeader(event, 'retry-after', Math.ceil(error.retryAfterSeconds))
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

/** A positive integer route parameter; anything else is simply not found. */
export function idParam(event: H3Event, name: string): number {
  const raw = getRouterParam(event, name) ?? ''
  if (!/^\d{1,9}$/.test(raw)) throw notFound()
  return Number(raw)
}
