// Demo field data: the party chief uploads the invented demo network
// (server/db/demo/demo-network.csv, measured by the North crew) into the demo
// project through the same service as the web upload, so a fresh `npm start`
// shows a project with observations. The chief uploads it because the file
// holds the control points, which a field crew may not set.
// Idempotent: skipped when those bytes are already there.
import { createHash } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { basename } from 'node:path'
import { fileURLToPath } from 'node:url'
import { and, eq } from 'drizzle-orm'
import { uploadObservationSet } from '../services/observations'
import type { FirmContext } from '../utils/guard'
import type { Db } from './client'
import { crewMembers, crews, firms, observationSets, projects, users } from './schema'

export const DEMO_NETWORK_CSV = fileURLToPath(new URL('./demo/demo-network.csv', import.meta.url))

export const DEMO_GNSS_CSV = fileURLToPath(new URL('./demo/demo-gnss.csv', import.meta.url))

export async function seedFieldData(db: Db, projectId: number, file = DEMO_NETWORK_CSV): Promise<void> {
  const bytes = readFileSync(file)
  const sha256 = createHash('sha256').update(bytes).digest('hex')
  const [project] = await db.select().from(projects).where(eq(projects.id, projectId)).limit(1)
  if (!project) return
  const [done] = await db.select({ id: observationSets.id }).from(observationSets)
    .where(and(eq(observationSets.firmId, project.firmId), eq(observationSets.projectId, project.id), eq(observationSets.sha256, sha256))).limit(1)
  if (done) return
  const [firm] = await db.select().from(firms).where(eq(firms.id, project.firmId)).limit(1)
  const [crewUser] = await db.select().from(users).where(eq(users.email, 'crew@tiepoint.test')).limit(1)
  const [chief] = await db.select().from(users).where(eq(users.email, 'chief@tiepoint.test')).limit(1)
  if (!firm || !crewUser || !chief) return
  const [crew] = await db.select({ id: crews.id }).from(crews)
    .innerJoin(crewMembers, eq(crewMembers.crewId, crews.id))
    .where(and(eq(crews.firmId, firm.id), eq(crewMembers.userId, crewUser.id))).limit(1)
  const ctx: FirmContext = {
    user: { id: chief.id, email: chief.email, name: chief.name, licenceNumber: null, licenceJurisdiction: null, via: 'session' },
    firm,
    role: 'party_chief',
  }
  await uploadObservationSet(ctx, project, { name: basename(file), bytes, crewId: crew?.id ?? null })
}
