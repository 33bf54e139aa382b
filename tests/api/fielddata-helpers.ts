// Helpers shared by the field-data API tests: fresh projects, a field-crew
// user made directly in the database, counts of what a project holds.
import { createHash } from 'node:crypto'
import { and, asc, eq, sql } from 'drizzle-orm'
import { useDb } from '../../server/db/client'
import { crewMembers, crews, firms, memberships, observationSets, observations, stations, users } from '../../server/db/schema'
import { hashPassword } from '../../server/services/passwords'
import { as, DEMO, type Client } from '../support/http'

export const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex')

export function fileForm(name: string, content: Buffer | string, fields: Record<string, string> = {}): FormData {
  const form = new FormData()
  form.append('file', new Blob([new Uint8Array(typeof content === 'string' ? Buffer.from(content, 'utf8') : content)]), name)
  for (const [k, v] of Object.entries(fields)) form.append(k, v)
  return form
}

export async function firmId(slug: string): Promise<number> {
  const [f] = await useDb().select({ id: firms.id }).from(firms).where(eq(firms.slug, slug))
  return f!.id
}

/** A fresh project of the demo firm made by the party chief, with the North crew (crew@) assigned. */
export async function freshProject(chief: Client, name: string, units: 'm' | 'ft' | 'usft' = 'm', assignNorth = true): Promise<number> {
  const r = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `${name} ${Date.now()} ${Math.random().toString(36).slice(2, 6)}`, crs: 'local', units })
  if (r.status !== 201) throw new Error(`project create failed: ${r.status} ${JSON.stringify(r.body)}`)
  if (assignNorth) {
    const crewsList = await chief.get(`/api/firms/${DEMO.firm}/crews`)
    const north = crewsList.body.find((c: { name: string }) => c.name === 'North crew')
    const a = await chief.post(`/api/firms/${DEMO.firm}/projects/${r.body.id}/crews`, { crewId: north.id })
    if (a.status !== 201) throw new Error(`crew assign failed: ${a.status} ${JSON.stringify(a.body)}`)
  }
  return r.body.id
}

export async function counts(projectId: number) {
  const db = useDb()
  const one = async (t: typeof observations | typeof observationSets | typeof stations) =>
    (await db.select({ n: sql<number>`count(*)::int` }).from(t).where(eq(t.projectId, projectId)))[0]!.n
  return { observations: await one(observations), sets: await one(observationSets), stations: await one(stations) }
}

/** A field-crew member of the demo firm on a crew of their own (assigned to no project). */
export async function outsiderCrewClient(): Promise<Client> {
  const db = useDb()
  const fid = await firmId(DEMO.firm)
  const email = `crew-${Date.now()}-${Math.random().toString(36).slice(2, 6)}@tiepoint.test`
  const password = 'outsider-crew-pass-1'
  const [u] = await db.insert(users).values({ email, name: 'Outsider Crew', passwordHash: await hashPassword(password) }).returning()
  await db.insert(memberships).values({ firmId: fid, userId: u!.id, role: 'field_crew' })
  const [c] = await db.insert(crews).values({ firmId: fid, name: `Outsider crew ${email}` }).returning()
  await db.insert(crewMembers).values({ firmId: fid, crewId: c!.id, userId: u!.id })
  return as(email, password)
}

export async function auditRows(entityType: string, entityId: string | number) {
  const db = useDb()
  const { auditLog } = await import('../../server/db/schema')
  // in the order they were written (without ORDER BY PostgreSQL may return them in any order)
  return db.select().from(auditLog).where(and(eq(auditLog.entityType, entityType), eq(auditLog.entityId, String(entityId)))).orderBy(asc(auditLog.id))
}
