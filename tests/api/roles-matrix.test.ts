// Who may write what, one table for every write route under server/api/firms
// and every role (docs/architecture.md, Roles):
//   owner             — everything, and the only one who manages members and invitations;
//   party chief       — everything field crew can, plus projects, stations and
//                       control, runs, sign-off requests, releases, client access;
//                       crews and instrument profiles as the firm's field lead;
//   licensed surveyor — everything a party chief can, plus sign-off (only they sign);
//   field crew        — uploads and edits observations on projects of their crew
//                       (403 elsewhere); every other write is 403;
//   client            — nothing but the releases of shared projects: every write
//                       is 404, and so is every read but the project and its releases.
// Each cell gets a fresh target, so a success in one cell cannot change another.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { crews, projectAccess, projectCrews, stations, users } from '../../server/db/schema'
import type { Role } from '../../shared/roles'
import { ROLES } from '../../shared/roles'
import { demoPassword } from '../support/env'
import { as, DEMO, type Client } from '../support/http'
import { DEMO_CSV, projectWithNetwork } from './adjustments-fixture'
import { finishedRun } from './signoffs-fixture'
import { addMember, stamp } from './tenancy-fixture'

afterAll(() => closeDb())

const EMAIL: Record<Role, string> = {
  owner: DEMO.owner, party_chief: DEMO.chief, field_crew: DEMO.crew, licensed_surveyor: DEMO.surveyor, client: DEMO.client,
}
const who: Record<Role, Client> = {} as never
const F = `/api/firms/${DEMO.firm}`

/** Signed project (finished run) and data project, both worked by the North crew and shared with the client; one unassigned project. */
let signed: Awaited<ReturnType<typeof finishedRun>>
let data: Awaited<ReturnType<typeof projectWithNetwork>>
let unassigned: Awaited<ReturnType<typeof projectWithNetwork>>
let northCrewId: number
let clientUserId: number
const obsPool: number[] = []
const signedObsPool: number[] = []
const unassignedObsPool: number[] = []

async function share(projectId: number) {
  await useDb().insert(projectAccess).values({ firmId: signed.firmId, projectId, userId: clientUserId }).onConflictDoNothing()
}
async function assignNorth(projectId: number) {
  await useDb().insert(projectCrews).values({ firmId: signed.firmId, projectId, crewId: northCrewId }).onConflictDoNothing()
}

beforeAll(async () => {
  for (const r of ROLES) who[r] = await as(EMAIL[r])
  signed = await finishedRun(who.party_chief, 'Roles matrix signed')
  data = await projectWithNetwork(DEMO.firm, 'Roles matrix data', DEMO_CSV)
  unassigned = await projectWithNetwork(DEMO.firm, 'Roles matrix unassigned', DEMO_CSV)
  const crewList = (await who.owner.get(`${F}/crews`)).body as { id: number; name: string }[]
  northCrewId = crewList.find((c) => c.name === 'North crew')!.id
  const [cu] = await useDb().select().from(users).where(eq(users.email, DEMO.client))
  clientUserId = cu!.id
  for (const p of [signed.projectId, data.projectId]) { await assignNorth(p); await share(p) }
  obsPool.push(...data.obsIdByLine.values())
  signedObsPool.push(...signed.obsIdByLine.values())
  unassignedObsPool.push(...unassigned.obsIdByLine.values())
}, 180_000)

interface Target { path: string; body?: unknown }
interface Row {
  route: string
  /** builds a fresh target for one cell */
  target: (role: Role) => Promise<Target>
  expect: Record<Role, number>
}

const chiefs = (ok: number): Record<Role, number> => ({ owner: ok, party_chief: ok, licensed_surveyor: ok, field_crew: 403, client: 404 })
const staff = (ok: number): Record<Role, number> => ({ owner: ok, party_chief: ok, licensed_surveyor: ok, field_crew: ok, client: 404 })
const owners = (ok: number): Record<Role, number> => ({ owner: ok, party_chief: 403, licensed_surveyor: 403, field_crew: 403, client: 404 })
const signers = (ok: number): Record<Role, number> => ({ owner: 403, party_chief: 403, licensed_surveyor: ok, field_crew: 403, client: 404 })

const fid = () => signed.firmId
async function freshCrew(assignTo?: number) {
  const [c] = await useDb().insert(crews).values({ firmId: fid(), name: `Matrix crew ${stamp()}` }).returning()
  if (assignTo) await useDb().insert(projectCrews).values({ firmId: fid(), projectId: assignTo, crewId: c!.id })
  return c!.id
}
async function freshStation(projectId: number) {
  const [s] = await useDb().insert(stations).values({ firmId: fid(), projectId, name: `MX${stamp()}`.slice(0, 40), kind: 'new' }).returning()
  return s!.id
}
async function freshInstrument() {
  const r = await who.owner.post(`${F}/instruments`, {
    name: `Matrix instrument ${stamp()}`, distanceMm: 1, distancePpm: 1, directionArcsec: 1, zenithArcsec: 1,
    centeringInstrumentMm: 0.5, centeringTargetMm: 0.5, levellingMmPerSqrtKm: 1,
  })
  if (r.status !== 201) throw new Error(`instrument: ${r.status}`)
  return r.body.id as number
}
function csvForm() {
  const form = new FormData()
  const text = `kind,at,from,to,value,unit,sigma,hi,ht,set,length,note\nslope_distance,KF01,,KF02,${(100 + Math.random()).toFixed(4)},m,,1.5,1.6,,,matrix ${stamp()}\n`
  form.append('file', new Blob([text]), `matrix-${stamp()}.csv`)
  return form
}
const manualRows = () => ({ rows: [{ kind: 'slope_distance', at: 'KF01', to: 'KF02', value: (100 + Math.random()).toFixed(4), unit: 'm', note: `matrix ${stamp()}` }] })
const P = (id: number) => `${F}/projects/${id}`

const ROWS: Row[] = [
  { route: 'POST projects', expect: chiefs(201), target: async () => ({ path: `${F}/projects`, body: { name: `Matrix ${stamp()}`, crs: 'local', units: 'm' } }) },
  { route: 'PATCH projects/:project', expect: chiefs(200), target: async () => ({ path: P(data.projectId), body: { description: `matrix ${stamp()}` } }) },
  { route: 'POST projects/:project/access', expect: chiefs(201), target: async () => ({ path: `${P(data.projectId)}/access`, body: { email: `matrix-client-${stamp()}@example.test` } }) },
  { route: 'POST projects/:project/crews', expect: chiefs(201), target: async () => ({ path: `${P(data.projectId)}/crews`, body: { crewId: await freshCrew() } }) },
  { route: 'DELETE projects/:project/crews/:crew', expect: chiefs(204), target: async () => ({ path: `${P(data.projectId)}/crews/${await freshCrew(data.projectId)}` }) },
  { route: 'POST projects/:project/stations', expect: chiefs(201), target: async () => ({ path: `${P(data.projectId)}/stations`, body: { name: `MS${stamp()}`.slice(0, 40), kind: 'new' } }) },
  { route: 'POST projects/:project/stations/import', expect: chiefs(200), target: async () => ({ path: `${P(data.projectId)}/stations/import`, body: { text: `MI${stamp().replace('-', '')},1000.000,2000.000\n` } }) },
  { route: 'PATCH projects/:project/stations/:station', expect: chiefs(200), target: async () => ({ path: `${P(data.projectId)}/stations/${await freshStation(data.projectId)}`, body: { description: 'matrix edit' } }) },
  { route: 'DELETE projects/:project/stations/:station', expect: chiefs(204), target: async () => ({ path: `${P(data.projectId)}/stations/${await freshStation(data.projectId)}` }) },
  { route: 'POST tolerance-profiles', expect: chiefs(201), target: async () => ({ path: `${F}/tolerance-profiles`, body: { kind: 'custom', name: `Matrix rule ${stamp()}`, mm: 10, ppm: 10, source: 'invented rule for tests' } }) },
  { route: 'POST crews', expect: chiefs(201), target: async () => ({ path: `${F}/crews`, body: { name: `Matrix crew ${stamp()}` } }) },
  { route: 'PATCH crews/:crew', expect: chiefs(200), target: async () => ({ path: `${F}/crews/${await freshCrew()}`, body: { name: `Matrix crew renamed ${stamp()}` } }) },
  { route: 'DELETE crews/:crew', expect: chiefs(204), target: async () => ({ path: `${F}/crews/${await freshCrew()}` }) },
  {
    route: 'POST instruments', expect: chiefs(201), target: async () => ({
      path: `${F}/instruments`, body: { name: `Matrix instrument ${stamp()}`, distanceMm: 1, distancePpm: 1, directionArcsec: 1, zenithArcsec: 1, centeringInstrumentMm: 0.5, centeringTargetMm: 0.5, levellingMmPerSqrtKm: 1 },
    }),
  },
  { route: 'PATCH instruments/:instrument', expect: chiefs(200), target: async () => ({ path: `${F}/instruments/${await freshInstrument()}`, body: { distanceMm: 2 } }) },
  { route: 'DELETE instruments/:instrument', expect: chiefs(204), target: async () => ({ path: `${F}/instruments/${await freshInstrument()}` }) },
  { route: 'POST invitations', expect: owners(201), target: async () => ({ path: `${F}/invitations`, body: { email: `matrix-invite-${stamp()}@tiepoint.test`, role: 'field_crew' } }) },
  {
    route: 'DELETE invitations/:invitation', expect: owners(204), target: async () => {
      const r = await who.owner.post(`${F}/invitations`, { email: `matrix-withdraw-${stamp()}@tiepoint.test`, role: 'client' })
      return { path: `${F}/invitations/${r.body.id}` }
    },
  },
  { route: 'PATCH members/:member', expect: owners(200), target: async () => ({ path: `${F}/members/${(await addMember(fid(), 'field_crew', 'matrix-role')).memberId}`, body: { role: 'party_chief' } }) },
  { route: 'DELETE members/:member', expect: owners(204), target: async () => ({ path: `${F}/members/${(await addMember(fid(), 'field_crew', 'matrix-remove')).memberId}` }) },
  // Field data: any staff member on a project of their crew.
  { route: 'POST projects/:project/observation-sets (assigned)', expect: staff(201), target: async () => ({ path: `${P(data.projectId)}/observation-sets`, body: csvForm() }) },
  { route: 'POST projects/:project/observation-sets/manual (assigned)', expect: staff(201), target: async () => ({ path: `${P(data.projectId)}/observation-sets/manual`, body: manualRows() }) },
  { route: 'PATCH projects/:project/observations/:observation (assigned)', expect: staff(200), target: async () => ({ path: `${P(data.projectId)}/observations/${obsPool.shift()}`, body: { excluded: true, reason: 'matrix' } }) },
  // … and field crew are refused on a project no crew of theirs works (the client is refused it too: not shared).
  { route: 'POST projects/:project/observation-sets (not their crew)', expect: { ...staff(201), field_crew: 403 }, target: async () => ({ path: `${P(unassigned.projectId)}/observation-sets`, body: csvForm() }) },
  { route: 'POST projects/:project/observation-sets/manual (not their crew)', expect: { ...staff(201), field_crew: 403 }, target: async () => ({ path: `${P(unassigned.projectId)}/observation-sets/manual`, body: manualRows() }) },
  {
    route: 'PATCH projects/:project/observations/:observation (not their crew)', expect: { ...staff(200), field_crew: 403 },
    target: async () => ({ path: `${P(unassigned.projectId)}/observations/${unassignedObsPool.shift()}`, body: { excluded: true, reason: 'matrix' } }),
  },
  // Sign-off and release, on the finished run, before anything re-runs it.
  { route: 'POST adjustments/:number/signoffs', expect: signers(201), target: async () => ({ path: `${signed.base}/adjustments/${signed.runNumber}/signoffs`, body: { statement: 'Certified for the roles matrix (test).', password: demoPassword, acknowledgeFailedTests: true } }) },
  {
    route: 'POST releases', expect: chiefs(201), target: async () => {
      const s = await who.licensed_surveyor.post(`${signed.base}/adjustments/${signed.runNumber}/signoffs`, { statement: 'Certified so a release can be made (test).', password: demoPassword, acknowledgeFailedTests: true })
      if (s.status !== 201) throw new Error(`sign-off for release: ${s.status} ${JSON.stringify(s.body)}`)
      return { path: `${signed.base}/releases`, body: { signoffId: s.body.id } }
    },
  },
  { route: 'POST adjustments/:number/signoff-request', expect: chiefs(202), target: async () => ({ path: `${signed.base}/adjustments/${signed.runNumber}/signoff-request`, body: { note: 'matrix' } }) },
  { route: 'POST adjustments', expect: chiefs(202), target: async () => ({ path: `${signed.base}/adjustments`, body: {} }) },
  { route: 'POST adjustments/:number/exclude', expect: chiefs(202), target: async () => ({ path: `${signed.base}/adjustments/${signed.runNumber}/exclude`, body: { observationId: signedObsPool.shift() } }) },
]

const METHOD = (route: string) => route.split(' ')[0]!

describe('write routes by role', () => {
  for (const row of ROWS) {
    for (const role of ROLES) {
      it(`${role} → ${row.route} answers ${row.expect[role]}`, async () => {
        const t = await row.target(role)
        const res = await who[role].request(METHOD(row.route), t.path, t.body)
        expect(res.status, `${role} ${row.route}: ${JSON.stringify(res.body)}`).toBe(row.expect[role])
      })
    }
  }
})

describe('what a client may read', () => {
  it('the releases of a shared project and their files: 200', async () => {
    const list = await who.client.get(`${signed.base}/releases`)
    expect(list.status).toBe(200)
    expect(list.body.length).toBeGreaterThan(0)
    const file = await who.client.raw(`${signed.base}/releases/${list.body[0].id}/files/csv`)
    expect(file.status).toBe(200)
    await file.arrayBuffer()
  })
  it('the releases of a project not shared with them: 404', async () => {
    expect((await who.client.get(`${P(unassigned.projectId)}/releases`)).status).toBe(404)
  })
  const closed = [
    '/members', '/invitations', '/crews', '/instruments', '/tolerance-profiles', '/audit',
    ':p/stations', ':p/observations', ':p/observation-sets', ':p/adjustments', ':p/adjustments/:n', ':p/adjustments/:n/status',
    ':p/adjustments/:n/export/coordinates.csv', ':p/adjustments/:n/export/residuals.csv', ':p/signoffs', ':p/signoffs/candidates',
    ':p/signoffs/preview?run=:n', ':p/crews', ':p/access', ':p/observation-sets/:set/file', ':p/adjustments/:n/vectors',
  ]
  for (const c of closed) {
    it(`everything else of the firm is 404, even on a shared project: GET ${c}`, async () => {
      const path = c.startsWith(':p')
        ? c.replace(':p', signed.base).replace(/:n/g, String(signed.runNumber)).replace(':set', String(signed.setId))
        : `${F}${c}`
      const res = await who.client.get(path)
      expect(res.status, `${path}: ${JSON.stringify(res.body).slice(0, 200)}`).toBe(404)
    })
  }
})
