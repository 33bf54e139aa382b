// The demo: an invented firm (Larchmere Survey Co.) with one person per role,
// an invented second firm for trying isolation, a demo project, crews,
// instrument and tolerance profiles. Idempotent: run it as often as you like.
// Demo data only — never real people, places or instruments.
import { fileURLToPath } from 'node:url'
import { and, eq } from 'drizzle-orm'
import type { Role } from '../../shared/roles'
import { queueRun } from '../services/adjustments'
import { hashPassword } from '../services/passwords'
import { stopBoss } from '../services/run-queue'
import type { FirmContext } from '../utils/guard'
import { findCrs } from '../../shared/crs'
import { DEMO_PROJECT_HEIGHT_M } from './demo/generate'
import { GNSS_DEMO } from './demo/gnss-project'
import { DEMO_GNSS_CSV, seedFieldData } from './seed-fielddata'
import { closeDb, useDb } from './client'
import type { Db } from './client'
import {
  adjustments, crewMembers, crews, firms, instrumentProfiles, memberships, projectAccess, projectCrews, projects, toleranceProfiles, users,
} from './schema'

export const DEMO_FIRM = 'larchmere'
export const OTHER_FIRM = 'kestrel'
export const demoPassword = () => process.env.DEMO_PASSWORD || 'tiepoint-demo'

export const DEMO_USERS: { email: string; name: string; firm: string; role: Role; licence?: [string, string] }[] = [
  { email: 'owner@tiepoint.test', name: 'Maren Oakes', firm: DEMO_FIRM, role: 'owner' },
  { email: 'chief@tiepoint.test', name: 'Dev Castellan', firm: DEMO_FIRM, role: 'party_chief' },
  { email: 'crew@tiepoint.test', name: 'Ilse Brandvold', firm: DEMO_FIRM, role: 'field_crew' },
  { email: 'surveyor@tiepoint.test', name: 'Tomasz Reyne', firm: DEMO_FIRM, role: 'licensed_surveyor', licence: ['LS-DEMO-0417', 'Demo State Board (invented)'] },
  { email: 'client@tiepoint.test', name: 'Priya Hollander', firm: DEMO_FIRM, role: 'client' },
  { email: 'other@tiepoint.test', name: 'Sol Verhoeven', firm: OTHER_FIRM, role: 'owner' },
]

async function upsertFirm(db: Db, slug: string, name: string) {
  await db.insert(firms).values({ slug, name }).onConflictDoNothing()
  const [f] = await db.select().from(firms).where(eq(firms.slug, slug))
  return f!
}

async function upsertUser(db: Db, u: (typeof DEMO_USERS)[number], passwordHash: string) {
  await db.insert(users).values({
    email: u.email, name: u.name, passwordHash,
    licenceNumber: u.licence?.[0] ?? null, licenceJurisdiction: u.licence?.[1] ?? null,
  }).onConflictDoNothing()
  const [row] = await db.select().from(users).where(eq(users.email, u.email))
  return row!
}

async function upsertProject(db: Db, firmId: number, name: string, description: string, createdBy: number, projectHeightM: number | null = null) {
  const [existing] = await db.select().from(projects).where(and(eq(projects.firmId, firmId), eq(projects.name, name)))
  if (existing) return existing
  const [p] = await db.insert(projects).values({ firmId, name, description, crs: 'local', units: 'm', projectHeightM, createdBy }).returning()
  return p!
}

export async function seedFoundation(db: Db) {
  const demo = await upsertFirm(db, DEMO_FIRM, 'Larchmere Survey Co.')
  const other = await upsertFirm(db, OTHER_FIRM, 'Kestrel Land Surveys')
  const firmIds: Record<string, number> = { [DEMO_FIRM]: demo.id, [OTHER_FIRM]: other.id }
  const hash = await hashPassword(demoPassword())
  const people: Record<string, number> = {}
  for (const u of DEMO_USERS) {
    const row = await upsertUser(db, u, hash)
    people[u.email] = row.id
    await db.insert(memberships).values({ firmId: firmIds[u.firm]!, userId: row.id, role: u.role }).onConflictDoNothing()
  }

  // Tolerance profiles: data, each with its published source.
  await db.insert(toleranceProfiles).values([
    { firmId: demo.id, name: 'ALTA/NSPS relative positional precision', kind: 'relative_ppm', params: { mm: 20, ppm: 50, confidence: 0.95 },
      source: 'ALTA/NSPS Minimum Standard Detail Requirements for ALTA/NSPS Land Title Surveys (2021), section 3.E: 2 cm + 50 ppm at 95 % confidence' },
    { firmId: demo.id, name: 'FGDC horizontal accuracy 2 cm (95 %)', kind: 'fgdc_95', params: { thresholdMm: 20 },
      source: 'FGDC-STD-007.2-1998, Geospatial Positioning Accuracy Standards Part 2: Standards for Geodetic Networks, accuracy classification at 95 % confidence' },
    { firmId: demo.id, name: 'Site control 5 mm + 10 ppm (firm rule)', kind: 'custom', params: { mm: 5, ppm: 10, confidence: 0.95 },
      source: 'Larchmere Survey Co. construction-control specification (invented demo rule)' },
    { firmId: other.id, name: 'ALTA/NSPS relative positional precision', kind: 'relative_ppm', params: { mm: 20, ppm: 50, confidence: 0.95 },
      source: 'ALTA/NSPS Minimum Standard Detail Requirements for ALTA/NSPS Land Title Surveys (2021), section 3.E: 2 cm + 50 ppm at 95 % confidence' },
  ]).onConflictDoNothing()
  const [alta] = await db.select().from(toleranceProfiles).where(and(eq(toleranceProfiles.firmId, demo.id), eq(toleranceProfiles.kind, 'relative_ppm')))

  // Instrument profiles: invented example presets, not any maker's specification.
  await db.insert(instrumentProfiles).values([
    { firmId: demo.id, name: 'Example 1″ total station', distanceMm: 1, distancePpm: 1.5, directionArcsec: 1, zenithArcsec: 1.5, centeringInstrumentMm: 0.8, centeringTargetMm: 1, levellingMmPerSqrtKm: 1.5, isExample: true },
    { firmId: demo.id, name: 'Example 3″ total station', distanceMm: 2, distancePpm: 2, directionArcsec: 3, zenithArcsec: 4, centeringInstrumentMm: 1, centeringTargetMm: 1.5, levellingMmPerSqrtKm: 2, isExample: true },
    { firmId: demo.id, name: 'Example digital level', distanceMm: 5, distancePpm: 5, directionArcsec: 10, zenithArcsec: 10, centeringInstrumentMm: 1, centeringTargetMm: 1, levellingMmPerSqrtKm: 0.7, isExample: true },
    { firmId: other.id, name: 'Example 2″ total station', distanceMm: 1.5, distancePpm: 2, directionArcsec: 2, zenithArcsec: 3, centeringInstrumentMm: 1, centeringTargetMm: 1, levellingMmPerSqrtKm: 2, isExample: true },
  ]).onConflictDoNothing()

  const project = await upsertProject(db, demo.id, 'Harrow Creek bridge control',
    'Invented demo: control network for a new footbridge over Harrow Creek. Two held pillars (CP1, CP2), a benchmark (BM1), direction sets, distances and a levelling loop. '
      + 'One observation in the file is a planted blunder: open run 1, find it at the top of the residual table, exclude it and re-run. '
      + 'The demo file names no instrument profile, so run 1 is weighted with the built-in default σ and says so.', people['chief@tiepoint.test']!, DEMO_PROJECT_HEIGHT_M)
  if (alta && project.toleranceProfileId === null) {
    await db.update(projects).set({ toleranceProfileId: alta.id }).where(eq(projects.id, project.id))
  }
  await upsertProject(db, other.id, 'Quarry Lane boundary', 'Invented demo project of the second firm.', people['other@tiepoint.test']!)

  await db.insert(crews).values([{ firmId: demo.id, name: 'North crew' }, { firmId: demo.id, name: 'River crew' }]).onConflictDoNothing()
  const [north] = await db.select().from(crews).where(and(eq(crews.firmId, demo.id), eq(crews.name, 'North crew')))
  await db.insert(crewMembers).values({ firmId: demo.id, crewId: north!.id, userId: people['crew@tiepoint.test']! }).onConflictDoNothing()
  await db.insert(projectCrews).values({ firmId: demo.id, projectId: project.id, crewId: north!.id }).onConflictDoNothing()
  await db.insert(projectAccess).values({ firmId: demo.id, projectId: project.id, userId: people['client@tiepoint.test']!, grantedBy: people['chief@tiepoint.test']! }).onConflictDoNothing()

  // the second demo project: GNSS vectors and a traverse in a projected CRS with N
  let [gnss] = await db.select().from(projects).where(and(eq(projects.firmId, demo.id), eq(projects.name, GNSS_DEMO.name)))
  if (!gnss) {
    ;[gnss] = await db.insert(projects).values({
      firmId: demo.id, name: GNSS_DEMO.name, description: GNSS_DEMO.description, crs: GNSS_DEMO.crs, crsDefinition: findCrs(GNSS_DEMO.crs)!.proj4,
      geoidSeparationM: GNSS_DEMO.geoidSeparationM, units: 'm', createdBy: people['chief@tiepoint.test']!,
    }).returning()
  }
  await db.insert(projectCrews).values({ firmId: demo.id, projectId: gnss!.id, crewId: north!.id }).onConflictDoNothing()

  return { demo, other, people, project, gnssProject: gnss! }
}

/**
 * The first start shows a finished run: when the demo project has no run yet,
 * queue one with the default settings; the worker computes it. The demo file
 * carries a planted blunder, so the run fails its global test and points at it.
 */
export async function seedDemoRun(db: Db, projectId: number, chiefId: number): Promise<void> {
  const [project] = await db.select().from(projects).where(eq(projects.id, projectId)).limit(1)
  if (!project) return
  const [any] = await db.select({ id: adjustments.id }).from(adjustments)
    .where(and(eq(adjustments.firmId, project.firmId), eq(adjustments.projectId, project.id))).limit(1)
  if (any) return
  const [firm] = await db.select().from(firms).where(eq(firms.id, project.firmId)).limit(1)
  const [chief] = await db.select().from(users).where(eq(users.id, chiefId)).limit(1)
  if (!firm || !chief) return
  const ctx: FirmContext = {
    user: { id: chief.id, email: chief.email, name: chief.name, licenceNumber: null, licenceJurisdiction: null, via: 'session' },
    firm,
    role: 'party_chief',
  }
  await queueRun(ctx, project, {})
}

export async function seedDemo(db: Db = useDb()) {
  const base = await seedFoundation(db)
  await seedFieldData(db, base.project.id)
  await seedDemoRun(db, base.project.id, base.people['chief@tiepoint.test']!)
  await seedFieldData(db, base.gnssProject.id, DEMO_GNSS_CSV)
  await seedDemoRun(db, base.gnssProject.id, base.people['chief@tiepoint.test']!)
  return base
}

/**
 * The demo owners have a published password, so they go only into the
 * project's own local cluster (the start and test scripts mark its exact URL)
 * or where someone asked for them with TIEPOINT_SEED_DEMO=1.
 */
export function demoSeedRefusal(env: NodeJS.ProcessEnv = process.env): string | null {
  if (env.TIEPOINT_SEED_DEMO === '1') return null
  if (env.DATABASE_URL && env.TIEPOINT_LOCAL_DATABASE_URL === env.DATABASE_URL) return null
  return 'not seeding the demo firm: DATABASE_URL is not the project\'s own local cluster, and the demo users have a published password. Set TIEPOINT_SEED_DEMO=1 to seed it anyway.'
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const refusal = demoSeedRefusal()
  if (refusal) {
    console.error(`[tiepoint] ${refusal}`)
    process.exit(3)
  }
  seedDemo()
    .then(() => console.error('[tiepoint] demo firm seeded'))
    .catch((error) => {
      console.error('[tiepoint] seeding failed:', error)
      process.exitCode = 1
    })
    .finally(async () => {
      await stopBoss()
      await closeDb()
    })
}
