// Domain errors: what went wrong, in the service's own words. Services and the
// engine's callers throw these; the route helper (server/utils/route.ts) turns
// them into HTTP answers through the one table below, so no service decides a
// status code. No h3 import here: the worker and scripts use the services too.

export interface ApiIssue {
  line?: number
  column?: string
  field?: string
  message: string
}

export type DomainErrorKind =
  | 'malformed'        // the request could not be read at all (broken JSON, broken multipart)
  | 'unauthenticated'  // nobody is signed in, or the session ended
  | 'forbidden'        // signed in, but this role or this kind of session may not do it
  | 'not_found'        // no such thing, or it belongs to another firm
  | 'conflict'         // the state does not allow it (duplicate, already signed, last owner …)
  | 'too_large'        // the body or file is over its cap
  | 'unsupported_media'// the body has the wrong content type
  | 'invalid'          // readable, but some fields or lines are wrong
  | 'throttled'        // too many attempts; try again later
  | 'upstream'         // a service we depend on (mail) failed; nothing saved
  | 'unavailable'      // the feature is switched off here
  | 'busy'             // a part of ours (the job queue) cannot take it right now; nothing saved, try again

/** The one place a domain error becomes an HTTP status. */
export const HTTP_STATUS: Record<DomainErrorKind, number> = {
  malformed: 400,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  too_large: 413,
  unsupported_media: 415,
  invalid: 422,
  throttled: 429,
  upstream: 502,
  unavailable: 404,
  busy: 503,
}

export class DomainError extends Error {
  constructor(
    public kind: DomainErrorKind,
    message: string,
    public errors?: ApiIssue[],
    /** extra fields of the answer (e.g. `existing` for a duplicate upload) */
    public extra?: Record<string, unknown>,
  ) {
    super(message)
  }

  get statusCode(): number {
    return HTTP_STATUS[this.kind]
  }
}

export const notFound = (what = 'Not found') => new DomainError('not_found', what)
export const forbidden = (what = 'Your role in this firm may not do this') => new DomainError('forbidden', what)
export const unauthorized = (what = 'Sign in first (session cookie or Authorization: Bearer token)') => new DomainError('unauthenticated', what)
export const conflict = (what: string, errors?: ApiIssue[], extra?: Record<string, unknown>) => new DomainError('conflict', what, errors, extra)
export const invalid = (what: string, errors?: ApiIssue[], extra?: Record<string, unknown>) => new DomainError('invalid', what, errors, extra)
export const tooLarge = (what: string) => new DomainError('too_large', what)

/** Too many attempts; `retryAfterSeconds` goes into the Retry-After header. */
export class ThrottledError extends DomainError {
  constructor(public retryAfterSeconds: number, message?: string) {
    super('throttled', message ?? `Too many attempts. Try again in ${waitText(retryAfterSeconds)}.`)
  }
}

export function waitText(seconds: number): string {
  return seconds < 90 ? `${Math.max(1, Math.ceil(seconds))} seconds` : `${Math.ceil(seconds / 60)} minutes`
}
