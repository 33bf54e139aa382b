// Real resources in a firm for the tenancy and role suites: a project with an
// uploaded network, a finished run, a sign-off, a release, a crew on the
// project, an instrument profile, an open invitation, a spare member and a
// spare station. Works for either demo firm (the second firm has only an owner,
// so a licensed surveyor is added to it here).
import { and, eq } from 'drizzle-orm'
import { useDb } from '../../server/db/client'
import { memberships, observations, projects, stations, users } from '../../server/db/schema'
import { hashPassword } from '../../server/services/passwords'
import { as, type Client } from '../support/http'
import { demoPassword } from '../support/env'
import { DEMO_CSV, projectWithNetwork, waitForRun } from './adjustments-fixture'

export const stamp = () => `${Date.now()}-${Math.random().toString(36).slice(2, 7)}`

/** A new user with a membership in `firmId` (password: the demo password). */
export async function addMember(firmId: number, role: 'owner' | 'party_chief' | 'field_crew' | 'licensed_surveyor' | 'client', label: string) {
  const db = useDb()
  const email = `${label}-${stamp()}@tiepoint.test`
  const [u] = await db.insert(users).values({
    email, name: `Test ${label}`, passwordHash: await hashPassword(demoPassword),
    licenceNumber: role === 'licensed_surveyor' ? 'TEST-0001' : null,
    licenceJurisdiction: role === 'licensed_surveyor' ? 'Invented county' : null,
  }).returning()
  const [m] = await db.insert(memberships).values({ firmId, userId: u!.id, role }).returning()
  return { email, userId: u!.id, memberId: m!.id }
}

export interface FirmFixture {
  firm: string
  firmId: number
  base: string
  ids: Record<string, number | string>
  /** rows of firm-level tables that belong to this fixture, by table name */
  own: Record<string, number[]>
}

/**
 * Builds everything in `firm`: `chief` may create (owner or party chief),
 * `signer` is a licensed surveyor of the firm, `owner` manages members.
 */
export async function firmFixture(firm: string, firmId: number, chief: Client, signer: Client, owner: Client, label: string): Promise<FirmFixture> {
  const db = useDb()
  const fx = await projectWithNetwork(firm, label, DEMO_CSV)
  const base = `/api/firms/${firm}/projects/${fx.projectId}`
  const must = (what: string, r: { status: number; body: any }, want: number) => {
    if (r.status !== want) throw new Error(`${label}: ${what} answered ${r.status} ${JSON.stringify(r.body)}`)
    return r.body
  }
  const tol = must('tolerance profile', await chief.post(`/api/firms/${firm}/tolerance-profiles`, {
    kind: 'custom', name: `Loose rule ${label} ${fx.projectId}`, mm: 100, ppm: 100, source: 'invented rule for tests',
  }), 201)
  await db.update(projects).set({ toleranceProfileId: tol.id }).where(eq(projects.id, fx.projectId))
  const run = must('queue run', await chief.post(`${base}/adjustments`, {}), 202)
  const status = await waitForRun(async () => (await chief.get(`${base}/adjustments/${run.number}/status`)).body, 90_000)
  if (status !== 'done') throw new Error(`${label}: the fixture run ended ${status}`)
  const signoff = must('sign-off', await signer.post(`${base}/adjustments/${run.number}/signoffs`, {
    statement: `Certified for the tenancy tests (${label}).`, password: demoPassword, acknowledgeFailedTests: true,
  }), 201)
  const release = must('release', await chief.post(`${base}/releases`, { signoffId: signoff.id }), 201)
  const crew = must('crew', await chief.post(`/api/firms/${firm}/crews`, { name: `Crew ${label} ${stamp()}` }), 201)
  must('assign crew', await chief.post(`${base}/crews`, { crewId: crew.id }), 201)
  const instrument = must('instrument', await chief.post(`/api/firms/${firm}/instruments`, {
    name: `Instrument ${label} ${stamp()}`, distanceMm: 1, distancePpm: 1.5, directionArcsec: 1, zenithArcsec: 1,
    centeringInstrumentMm: 0.5, centeringTargetMm: 0.5, levellingMmPerSqrtKm: 1,
  }), 201)
  const invitation = must('invitation', await owner.post(`/api/firms/${firm}/invitations`, { email: `invitee-${label}-${stamp()}@tiepoint.test`, role: 'client' }), 201)
  const spare = await addMember(firmId, 'field_crew', `spare-${label}`)
  // A station no observation uses, so deleting it would succeed if the route let it.
  const [station] = await db.insert(stations).values({ firmId, projectId: fx.projectId, name: `SPARE-${fx.projectId}`, kind: 'new' }).returning()
  const [obs] = await db.select({ id: observations.id }).from(observations)
    .where(and(eq(observations.projectId, fx.projectId), eq(observations.excluded, false))).limit(1)
  return {
    firm, firmId, base,
    ids: {
      project: fx.projectId, number: run.number, set: fx.setId, observation: obs!.id, station: station!.id, crew: crew.id,
      instrument: instrument.id, member: spare.memberId, invitation: invitation.id, release: release.id, format: 'csv',
      signoff: signoff.id, tolerance: tol.id, profile: tol.id, memberUser: spare.userId,
    },
    own: {
      projects: [fx.projectId], crews: [crew.id], instrument_profiles: [instrument.id], invitations: [invitation.id],
      memberships: [spare.memberId], tolerance_profiles: [tol.id],
    },
  }
}

/** Signs in as a fresh licensed surveyor of `firmId`. */
export async function newSigner(firmId: number, label: string): Promise<Client> {
  const s = await addMember(firmId, 'licensed_surveyor', `signer-${label}`)
  return as(s.email)
}
