// One route helper for the whole API. Every handler under server/api is
//
//   defineFirmRoute({ roles, project?, body?, query? }, handler)   firm-scoped
//   defineUserRoute({ session?, body?, query? }, handler)           the signed-in person
//   definePublicRoute({ body?, query? }, handler)                   no sign-in
//
// and each request goes through the same steps, in this order:
//   1. guard     who is asking (session cookie or bearer token), their role in the
//                firm, the project (another firm's answers 404 before any role check)
//   2. origin    a cookie-authenticated change must come from the app's own origin
//   3. body cap  JSON bodies at most 1 MB, counted as they arrive (server/utils/body.ts);
//                JSON routes take only application/json, upload routes only multipart
//   4. zod       body and query validated by the schema from shared/schemas/<noun>.ts
//   5. handler   one service call; services throw domain errors (server/utils/errors.ts)
//   6. errors    every error leaves as `{ statusCode, message, errors? }` (server/utils/api.ts)
import type { H3Event } from 'h3'
import type { z } from 'zod'
import type { Role } from '../../shared/roles'
import type { Project } from '../db/schema'
import { sendApiError, zodIssues } from './api'
import { isMultipart, readJsonBody } from './body'
import { DomainError, forbidden, invalid, notFound } from './errors'
import { requireCrewAssignment, requireFirmMember, requireProject, requireUser } from './guard'
import type { FirmContext, SessionUser } from './guard'
import { requireSameOrigin } from './request'

type Schema = z.ZodType
type Out<S> = S extends Schema ? z.output<S> : undefined

interface CommonOptions<B extends Schema | undefined, Q extends Schema | undefined> {
  /** the JSON body's schema; the route then accepts only application/json */
  body?: B
  /** the query string's schema */
  query?: Q
  /** 'only': the route reads a multipart upload itself; 'also': multipart or the JSON body */
  multipart?: 'only' | 'also'
  /** status of a successful answer (the handler may still set another) */
  status?: number
}

export interface FirmRouteOptions<B extends Schema | undefined, Q extends Schema | undefined> extends CommonOptions<B, Q> {
  /** roles that may act; omitted means any member of the firm (clients included) */
  roles?: readonly Role[]
  /** load the :project route parameter inside the firm */
  project?: boolean
  /** field crew must be on a crew assigned to the project */
  crewAssigned?: boolean
  /** needs a browser session: a bearer token is refused */
  session?: boolean
}

export interface UserRouteOptions<B extends Schema | undefined, Q extends Schema | undefined> extends CommonOptions<B, Q> {
  session?: boolean
}

interface Input<B, Q> {
  event: H3Event
  body: Out<B>
  query: Out<Q>
}
export interface FirmInput<B, Q> extends Input<B, Q> { ctx: FirmContext; user: SessionUser; project: Project }
export interface UserInput<B, Q> extends Input<B, Q> { user: SessionUser }
export type PublicInput<B, Q> = Input<B, Q>

async function readInputs<B extends Schema | undefined, Q extends Schema | undefined>(event: H3Event, opts: CommonOptions<B, Q>): Promise<{ body: Out<B>; query: Out<Q> }> {
  let body: unknown
  const multipart = isMultipart(event)
  if (opts.multipart === 'only' && !multipart) {
    throw new DomainError('unsupported_media', 'Send the file as multipart/form-data with the field `file`')
  }
  if (multipart && !opts.multipart) {
    throw new DomainError('unsupported_media', 'Send the body as JSON with Content-Type: application/json')
  }
  if (opts.body && !multipart) {
    const raw = await readJsonBody(event)
    const parsed = opts.body.safeParse(raw)
    if (!parsed.success) throw invalid('Some fields are not valid', zodIssues(parsed.error))
    body = parsed.data
  }
  let query: unknown
  if (opts.query) {
    const parsed = opts.query.safeParse(getQuery(event))
    if (!parsed.success) throw invalid('Some query parameters are not valid', zodIssues(parsed.error))
    query = parsed.data
  }
  return { body: body as Out<B>, query: query as Out<Q> }
}

function wrap<T>(status: number | undefined, run: (event: H3Event) => Promise<T>) {
  return defineEventHandler(async (event) => {
    try {
      if (status) setResponseStatus(event, status)
      return await run(event)
    } catch (error) {
      return sendApiError(event, error)
    }
  })
}

function requireBrowserSession(user: SessionUser, what: string) {
  if (user.via !== 'session') throw forbidden(`${what} needs a signed-in browser session, not an API token`)
}

export function defineFirmRoute<T, B extends Schema | undefined = undefined, Q extends Schema | undefined = undefined>(
  opts: FirmRouteOptions<B, Q>,
  handler: (input: FirmInput<B, Q>) => Promise<T> | T,
) {
  return wrap(opts.status, async (event) => {
    let ctx: FirmContext
    let project: Project | undefined
    if (opts.project) {
      // project first, so another firm's project answers 404 whatever the role
      ctx = await requireFirmMember(event)
      project = await requireProject(event, ctx)
      if (opts.roles?.length && !opts.roles.includes(ctx.role)) throw ctx.role === 'client' ? notFound() : forbidden()
      if (opts.crewAssigned) await requireCrewAssignment(ctx, project)
    } else {
      ctx = await requireFirmMember(event, opts.roles ?? [])
    }
    if (opts.session) requireBrowserSession(ctx.user, 'This')
    requireSameOrigin(event, ctx.user.via)
    const { body, query } = await readInputs(event, opts)
    return handler({ event, ctx, user: ctx.user, project: project as Project, body, query })
  })
}

export function defineUserRoute<T, B extends Schema | undefined = undefined, Q extends Schema | undefined = undefined>(
  opts: UserRouteOptions<B, Q>,
  handler: (input: UserInput<B, Q>) => Promise<T> | T,
) {
  return wrap(opts.status, async (event) => {
    const user = await requireUser(event)
    if (opts.session) requireBrowserSession(user, 'This')
    requireSameOrigin(event, user.via)
    const { body, query } = await readInputs(event, opts)
    return handler({ event, user, body, query })
  })
}

export function definePublicRoute<T, B extends Schema | undefined = undefined, Q extends Schema | undefined = undefined>(
  opts: CommonOptions<B, Q>,
  handler: (input: PublicInput<B, Q>) => Promise<T> | T,
) {
  return wrap(opts.status, async (event) => {
    requireSameOrigin(event, 'public')
    const { body, query } = await readInputs(event, opts)
    return handler({ event, body, query })
  })
}
