// Who is asking, and may they? One guard for every firm-scoped route:
// a firm the user does not belong to answers 404 (never 403: we do not even
// confirm it exists); a role that may not act answers 403, except clients, who
// see nothing of the firm but their releases and so get 404.
import type { H3Event } from 'h3'
import { and, eq, isNull } from 'drizzle-orm'
import { getToken } from '#auth'
import type { Role } from '../../shared/roles'
import { apiTokens, firms, memberships, projectAccess, projectCrews, crewMembers, projects, users } from '../db/schema'
import type { Firm, Project } from '../db/schema'
import { sha256Hex } from '../services/passwords'
import { DomainError, forbidden, notFound, unauthorized } from './errors'
import { idParam } from './api'
import { sessionEnded } from './session'
import type { SessionClaims } from './session'

export interface SessionUser {
  id: number
  email: string
  name: string
  licenceNumber: string | null
  licenceJurisdiction: string | null
  via: 'session' | 'token'
}

export interface FirmContext {
  user: SessionUser
  firm: Firm
  role: Role
}

/**
 * The signed-in person (session cookie or personal API token), or 401. A
 * session ends when the person's session version moved on (password changed
 * or reset) or 12 hours after sign-in.
 */
export async function requireUser(event: H3Event): Promise<SessionUser> {
  const cached = event.context.tiepointUser as SessionUser | undefined
  if (cached) return cached
  const db = useDb()
  let userId: number | undefined
  let claims: SessionClaims | undefined
  let via: SessionUser['via'] = 'session'
  const header = getRequestHeader(event, 'authorization')
  if (header?.toLowerCase().startsWith('bearer ')) {
    const hash = sha256Hex(header.slice(7).trim())
    const [row] = await db.select({ id: apiTokens.id, userId: apiTokens.userId }).from(apiTokens)
      .where(and(eq(apiTokens.tokenHash, hash), isNull(apiTokens.revokedAt))).limit(1)
    if (!row) throw new DomainError('unauthenticated', 'This API token is not valid or was revoked')
    userId = row.userId
    via = 'token'
    await db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.id))
  } else {
    // The secret is passed here because nuxt-auth learns it only when its
    // /api/auth handler is first loaded: after an app restart, every session
    // answered 401 until someone happened to open a sign-in route. The same
    // variables as runtimeConfig.authSecret (NUXT_AUTH_SECRET) and the handler's fallback.
    const secret = process.env.NUXT_AUTH_SECRET || process.env.AUTH_SECRET
    const token = await getToken({ event, ...(secret ? { secret } : {}) }).catch(() => null)
    claims = (token ?? undefined) as SessionClaims | undefined
    if (typeof claims?.uid === 'number') userId = claims.uid
  }
  if (!userId) throw unauthorized()
  const [u] = await db.select().from(users).where(eq(users.id, userId)).limit(1)
  if (!u) throw unauthorized()
  if (claims) {
    const ended = sessionEnded(claims, u.sessionVersion)
    if (ended) throw unauthorized(ended)
  }
  const user: SessionUser = { id: u.id, email: u.email, name: u.name, licenceNumber: u.licenceNumber, licenceJurisdiction: u.licenceJurisdiction, via }
  event.context.tiepointUser = user
  return user
}

/**
 * The firm named by the `firm` route parameter (its slug) and the user's role
 * in it. `allowed` lists the roles that may act; empty means any member.
 */
export async function requireFirmMember(event: H3Event, allowed: readonly Role[] = []): Promise<FirmContext> {
  const user = await requireUser(event)
  const slug = getRouterParam(event, 'firm') ?? ''
  const [row] = await useDb().select({ firm: firms, role: memberships.role }).from(memberships)
    .innerJoin(firms, eq(firms.id, memberships.firmId))
    .where(and(eq(firms.slug, slug), eq(memberships.userId, user.id))).limit(1)
  if (!row) throw notFound('No such firm')
  if (allowed.length && !allowed.includes(row.role)) {
    throw row.role === 'client' ? notFound() : forbidden()
  }
  return { user, firm: row.firm, role: row.role }
}

/**
 * The project named by the `project` route parameter, inside the context's
 * firm. Clients see only projects shared with them.
 */
export async function requireProject(event: H3Event, ctx: FirmContext): Promise<Project> {
  const projectId = idParam(event, 'project')
  const db = useDb()
  const [project] = await db.select().from(projects)
    .where(and(eq(projects.firmId, ctx.firm.id), eq(projects.id, projectId))).limit(1)
  if (!project) throw notFound('No such project')
  if (ctx.role === 'client') {
    const [access] = await db.select({ id: projectAccess.id }).from(projectAccess)
      .where(and(eq(projectAccess.firmId, ctx.firm.id), eq(projectAccess.projectId, project.id), eq(projectAccess.userId, ctx.user.id))).limit(1)
    if (!access) throw notFound('No such project')
  }
  return project
}

/** Field crew may change data only on projects one of their crews is assigned to. */
export async function requireCrewAssignment(ctx: FirmContext, project: Project): Promise<void> {
  if (ctx.role !== 'field_crew') return
  const [row] = await useDb().select({ id: projectCrews.id }).from(projectCrews)
    .innerJoin(crewMembers, and(eq(crewMembers.crewId, projectCrews.crewId), eq(crewMembers.firmId, ctx.firm.id)))
    .where(and(eq(projectCrews.firmId, ctx.firm.id), eq(projectCrews.projectId, project.id), eq(crewMembers.userId, ctx.user.id))).limit(1)
  if (!row) throw forbidden('You are not on a crew assigned to this project')
}
