// Projects of a firm: list with status and counts, create, read, update.
import { and, desc, eq, inArray, sql } from 'drizzle-orm'
import { findCrs } from '../../shared/crs'
import type { ProjectCreate, ProjectUpdate } from '../../shared/schemas/projects'
import { adjustments, observations, projectAccess, projects, stations } from '../db/schema'
import type { Project } from '../db/schema'
import type { FirmContext } from '../utils/guard'
import { useDb } from '../db/client'
import { DomainError } from '../utils/errors'
import { audit } from './audit'
import { getToleranceProfile } from './tolerance'

export interface ProjectDto {
  id: number
  name: string
  description: string
  crs: string
  crsName: string
  units: Project['units']
  angleFormat: Project['angleFormat']
  precisionUnit: Project['precisionUnit']
  status: Project['status']
  toleranceProfileId: number | null
  geoidSeparationM: number
  refractionK: number
  refractionSigmaK: number
  projectHeightM: number | null
  createdAt: string
  updatedAt: string
  counts?: { stations: number; observations: number; runs: number }
}

export function projectDto(p: Project): ProjectDto {
  return {
    id: p.id,
    name: p.name,
    description: p.description,
    crs: p.crs,
    crsName: p.crs === 'local' ? 'Local plane system' : (findCrs(p.crs)?.name ?? p.crs),
    units: p.units,
    angleFormat: p.angleFormat,
    precisionUnit: p.precisionUnit,
    status: p.status,
    toleranceProfileId: p.toleranceProfileId,
    geoidSeparationM: p.geoidSeparationM,
    refractionK: p.refractionK,
    refractionSigmaK: p.refractionSigmaK,
    projectHeightM: p.projectHeightM,
    createdAt: p.createdAt.toISOString(),
    updatedAt: p.updatedAt.toISOString(),
  }
}

export async function listProjects(ctx: FirmContext): Promise<ProjectDto[]> {
  const db = useDb()
  const where = ctx.role === 'client'
    ? and(eq(projects.firmId, ctx.firm.id), inArray(projects.id,
        db.select({ id: projectAccess.projectId }).from(projectAccess)
          .where(and(eq(projectAccess.firmId, ctx.firm.id), eq(projectAccess.userId, ctx.user.id)))))
    : eq(projects.firmId, ctx.firm.id)
  const rows = await db.select({
    project: projects,
    // The outer columns are written out in full: in a single-table query Drizzle
    // renders ${projects.id} unqualified, which would bind to the subquery's table.
    stations: sql<number>`(select count(*)::int from ${stations} s where s.firm_id = "projects"."firm_id" and s.project_id = "projects"."id")`,
    observations: sql<number>`(select count(*)::int from ${observations} o where o.firm_id = "projects"."firm_id" and o.project_id = "projects"."id")`,
    runs: sql<number>`(select count(*)::int from ${adjustments} a where a.firm_id = "projects"."firm_id" and a.project_id = "projects"."id")`,
  }).from(projects).where(where).orderBy(desc(projects.updatedAt))
  return rows.map((r) => ({ ...projectDto(r.project), counts: { stations: r.stations, observations: r.observations, runs: r.runs } }))
}

/** One project with its counts, so the overview can say what the next step really is. */
export async function getProjectWithCounts(ctx: FirmContext, project: Project): Promise<ProjectDto> {
  const db = useDb()
  const count = async (table: typeof stations | typeof observations | typeof adjustments) => {
    const [row] = await db.select({ n: sql<number>`count(*)::int` }).from(table)
      .where(and(eq(table.firmId, ctx.firm.id), eq(table.projectId, project.id)))
    return row?.n ?? 0
  }
  const [st, ob, ru] = await Promise.all([count(stations), count(observations), count(adjustments)])
  return { ...projectDto(project), counts: { stations: st, observations: ob, runs: ru } }
}

export async function createProject(ctx: FirmContext, body: ProjectCreate): Promise<ProjectDto> {
  const db = useDb()
  return db.transaction(async (tx) => {
    const [p] = await tx.insert(projects).values({
      firmId: ctx.firm.id,
      name: body.name,
      description: body.description ?? '',
      crs: body.crs,
      crsDefinition: body.crs === 'local' ? null : findCrs(body.crs)!.proj4,
      units: body.units,
      angleFormat: body.angleFormat ?? 'dms',
      // feet projects start in hundredths of their foot unless told otherwise
      precisionUnit: body.precisionUnit ?? (body.units === 'm' ? 'mm' : 'hundredth_ft'),
      createdBy: ctx.user.id,
    }).returning()
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'project.create', entityType: 'project', entityId: p!.id, projectId: p!.id, after: projectDto(p!) })
    return projectDto(p!)
  })
}

export async function updateProject(ctx: FirmContext, project: Project, body: ProjectUpdate): Promise<ProjectDto> {
  const db = useDb()
  // The id arrives in the body, so it must be looked up in this firm like any other reference.
  if (body.toleranceProfileId != null) {
    const t = await getToleranceProfile(ctx.firm.id, body.toleranceProfileId)
    if (!t) throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'toleranceProfileId', message: 'toleranceProfileId: no such accuracy standard in this firm' }])
    // a retired standard may stay where it is, but is not chosen anew
    if (t.retiredAt && t.id !== project.toleranceProfileId) {
      throw new DomainError('invalid', 'Some fields are not valid', [{ field: 'toleranceProfileId', message: `toleranceProfileId: '${t.name}' is retired; choose a current accuracy standard` }])
    }
  }
  return db.transaction(async (tx) => {
    const patch: Partial<typeof projects.$inferInsert> = { ...body }
    if (body.crs) patch.crsDefinition = body.crs === 'local' ? null : findCrs(body.crs)!.proj4
    // a project that moves between metres and feet takes that unit's starting precision unit unless told
    if (body.units && body.precisionUnit === undefined && (body.units === 'm') !== (project.units === 'm')) {
      patch.precisionUnit = body.units === 'm' ? 'mm' : 'hundredth_ft'
    }
    const [p] = await tx.update(projects).set(patch)
      .where(and(eq(projects.firmId, ctx.firm.id), eq(projects.id, project.id))).returning()
    await audit(tx, { firmId: ctx.firm.id, userId: ctx.user.id, action: 'project.update', entityType: 'project', entityId: project.id, projectId: project.id, before: projectDto(project), after: projectDto(p!) })
    return projectDto(p!)
  })
}
