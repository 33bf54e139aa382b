// Crews of a firm with their members, and which crews work on a project.
// Field crew may upload and edit only on projects their crew is assigned to.
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { CrewBody, CrewUpdate } from '../../shared/schemas/fielddata'
import { useDb } from '../db/client'
import type { Tx } from '../db/client'
import { crewMembers, crews, memberships, projectCrews, users } from '../db/schema'
import type { Project } from '../db/schema'
import { DomainError, notFound } from '../utils/errors'
import type { FirmContext } from '../utils/guard'
import { audit } from './audit'

export interface CrewDto {
  id: number
  name: string
  members: { id: number; name: string; email: string }[]
  projectIds: number[]
}

export async function listCrews(ctx: FirmContext, projectId?: number): Promise<CrewDto[]> {
  const db = useDb()
  const rows = await db.select().from(crews).where(eq(crews.firmId, ctx.firm.id)).orderBy(asc(crews.name))
  const members = await db.select({ crewId: crewMembers.crewId, id: users.id, name: users.name, email: users.email }).from(crewMembers)
    .innerJoin(users, eq(users.id, crewMembers.userId)).where(eq(crewMembers.firmId, ctx.firm.id)).orderBy(asc(users.name))
  const assigned = await db.select({ crewId: projectCrews.crewId, projectId: projectCrews.projectId }).from(projectCrews)
    .where(eq(projectCrews.firmId, ctx.firm.id))
  const list = rows.map((c) => ({
    id: c.id,
    name: c.name,
    members: members.filter((m) => m.crewId === c.id).map(({ id, name, email }) => ({ id, name, email })),
    projectIds: assigned.filter((a) => a.crewId === c.id).map((a) => a.projectId),
  }))
  return projectId === undefined ? list : list.filter((c) => c.projectIds.includes(projectId))
}

async function findCrew(ctx: FirmContext, id: number) {
  const [c] = await useDb().select().from(crews).where(and(eq(crews.firmId, ctx.firm.id), eq(crews.id, id))).limit(1)
  if (!c) throw notFound('No such crew')
  return c
}

/** Members must be staff of this firm (never a client, never someone from elsewhere). */
async function setMembers(tx: Tx, ctx: FirmContext, crewId: number, userIds: number[]) {
  const ids = [...new Set(userIds)]
  if (ids.length) {
    const ok = await tx.select({ userId: memberships.userId }).from(memberships)
      .where(and(eq(memberships.firmId, ctx.firm.id), inArray(memberships.userId, ids)))
    const staff = new Set(ok.map((r) => r.userId))
    const bad = ids.filter((id) => !staff.has(id))
    if (bad.length) throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'memberIds', message: `memberIds: ${bad.join(', ')} are not members of this firm` }])
  }
  await tx.delete(crewMembers).where(and(eq(crewMembers.firmId, ctx.firm.id), eq(crewMembers.crewId, crewId)))
  if (ids.length) await tx.insert(crewMembers).values(ids.map((userId) => ({ firmId: ctx.firm.id, crewId, userId })))
}

export async function createCrew(ctx: FirmContext, body: CrewBody): Promise<CrewDto> {
  const id = await useDb().transaction(async (tx) => {
    const [c] = await tx.insert(crews).values({ firmId: ctx.firm.id, name: body.name }).onConflictDoNothing().returning()
    if (!c) throw new DomainError('conflict', `A crew named '${body.name}' already exists`)
    await setMembers(tx, ctx, c.id, body.memberIds ?? [])
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'crew.create', entityType: 'crew', entityId: c.id, after: body })
    return c.id
  })
  return (await listCrews(ctx)).find((c) => c.id === id)!
}

export async function updateCrew(ctx: FirmContext, id: number, body: CrewUpdate): Promise<CrewDto> {
  const before = (await listCrews(ctx)).find((c) => c.id === id)
  if (!before) throw notFound('No such crew')
  await useDb().transaction(async (tx) => {
    if (body.name && body.name !== before.name) {
      const [clash] = await tx.select({ id: crews.id }).from(crews).where(and(eq(crews.firmId, ctx.firm.id), eq(crews.name, body.name))).limit(1)
      if (clash) throw new DomainError('conflict', `A crew named '${body.name}' already exists`)
      await tx.update(crews).set({ name: body.name }).where(and(eq(crews.firmId, ctx.firm.id), eq(crews.id, id)))
    }
    if (body.memberIds) await setMembers(tx, ctx, id, body.memberIds)
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'crew.update', entityType: 'crew', entityId: id, before, after: body })
  })
  return (await listCrews(ctx)).find((c) => c.id === id)!
}

export async function deleteCrew(ctx: FirmContext, id: number): Promise<void> {
  const c = await findCrew(ctx, id)
  await useDb().transaction(async (tx) => {
    await tx.delete(crews).where(and(eq(crews.firmId, ctx.firm.id), eq(crews.id, id)))
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'crew.delete', entityType: 'crew', entityId: id, before: { name: c.name } })
  })
}

export async function assignCrew(ctx: FirmContext, project: Project, crewId: number): Promise<CrewDto[]> {
  const c = await findCrew(ctx, crewId).catch(() => {
    throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'crewId', message: 'crewId: no such crew in this firm' }])
  })
  await useDb().transaction(async (tx) => {
    await tx.insert(projectCrews).values({ firmId: ctx.firm.id, projectId: project.id, crewId: c.id }).onConflictDoNothing()
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'project.crew_assign', entityType: 'project', entityId: project.id, projectId: project.id, after: { crewId: c.id, name: c.name } })
  })
  return listCrews(ctx, project.id)
}

export async function unassignCrew(ctx: FirmContext, project: Project, crewId: number): Promise<void> {
  const c = await findCrew(ctx, crewId)
  await useDb().transaction(async (tx) => {
    await tx.delete(projectCrews).where(and(eq(projectCrews.firmId, ctx.firm.id), eq(projectCrews.projectId, project.id), eq(projectCrews.crewId, crewId)))
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'project.crew_unassign', entityType: 'project', entityId: project.id, projectId: project.id, before: { crewId, name: c.name } })
  })
}
