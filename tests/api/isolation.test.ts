// Every firm-scoped route, from one table: without a session it answers 401,
// and another firm's resources answer 404 — both through the other firm's slug
// and through the other firm's ids under one's own firm (DESIGN.md sections 2, 7).
// Add a row for each new firm-scoped route; add an id lookup to FOREIGN_IDS
// for each new kind of :param.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import type { Db } from '../../server/db/client'
import { firms, instrumentProfiles, invitations, memberships, projects } from '../../server/db/schema'
import { as, Client, DEMO } from '../support/http'

afterAll(() => closeDb())

interface RouteRow {
  method: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE'
  /** with :firm and any :param that FOREIGN_IDS knows */
  path: string
  /** a body that would be valid, so a 404 cannot come from validation */
  body?: unknown
}

export const ROUTES: RouteRow[] = [
  { method: 'GET', path: '/api/firms/:firm/projects' },
  { method: 'POST', path: '/api/firms/:firm/projects', body: { name: 'Isolation probe', crs: 'local', units: 'm' } },
  { method: 'GET', path: '/api/firms/:firm/projects/:project' },
  { method: 'PATCH', path: '/api/firms/:firm/projects/:project', body: { name: 'Renamed by another firm' } },
  { method: 'GET', path: '/api/firms/:firm/members' },
  { method: 'PATCH', path: '/api/firms/:firm/members/:member', body: { role: 'client' } },
  { method: 'DELETE', path: '/api/firms/:firm/members/:member' },
  { method: 'GET', path: '/api/firms/:firm/invitations' },
  { method: 'POST', path: '/api/firms/:firm/invitations', body: { email: 'isolation-probe@tiepoint.test', role: 'client' } },
  { method: 'DELETE', path: '/api/firms/:firm/invitations/:invitation' },
  { method: 'GET', path: '/api/firms/:firm/mailbox' },
  { method: 'GET', path: '/api/firms/:firm/audit' },
  { method: 'GET', path: '/api/firms/:firm/crews' },
  { method: 'GET', path: '/api/firms/:firm/instruments' },
  { method: 'DELETE', path: '/api/firms/:firm/instruments/:instrument' },
  { method: 'GET', path: '/api/firms/:firm/tolerance-profiles' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/access' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/crews' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/observation-sets' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/observations' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/releases' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/signoffs' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/stations' },
]

/** For each :param, an id belonging to the other firm (kestrel). */
export const FOREIGN_IDS: Record<string, (db: Db, firmId: number) => Promise<number>> = {
  project: async (db, firmId) => (await db.select({ id: projects.id }).from(projects).where(eq(projects.firmId, firmId)).limit(1))[0]!.id,
  instrument: async (db, firmId) => (await db.select({ id: instrumentProfiles.id }).from(instrumentProfiles).where(eq(instrumentProfiles.firmId, firmId)).limit(1))[0]!.id,
  member: async (db, firmId) => (await db.select({ id: memberships.id }).from(memberships).where(eq(memberships.firmId, firmId)).limit(1))[0]!.id,
  invitation: async (db, firmId) => {
    const [existing] = await db.select({ id: invitations.id }).from(invitations).where(eq(invitations.firmId, firmId)).limit(1)
    if (existing) return existing.id
    const [inv] = await db.insert(invitations).values({
      firmId, email: `kestrel-invitee-${Date.now()}@tiepoint.test`, role: 'client', tokenHash: `isolation-${Date.now()}`,
      expiresAt: new Date(Date.now() + 86_400_000),
    }).returning({ id: invitations.id })
    return inv!.id
  },
}

const ids: Record<string, number> = {}
let owner: Client

beforeAll(async () => {
  const db = useDb()
  const [kestrel] = await db.select().from(firms).where(eq(firms.slug, DEMO.otherFirm))
  const params = new Set(ROUTES.flatMap((r) => [...r.path.matchAll(/:(\w+)/g)].map((m) => m[1]!)).filter((p) => p !== 'firm'))
  for (const p of params) {
    const lookup = FOREIGN_IDS[p]
    if (!lookup) throw new Error(`isolation table: no FOREIGN_IDS lookup for :${p}`)
    ids[p] = await lookup(db, kestrel!.id)
  }
  owner = await as(DEMO.owner)
})

const fill = (path: string, firm: string) => path.replace(':firm', firm).replace(/:(\w+)/g, (_m, p: string) => String(ids[p]))

async function snapshot() {
  const db = useDb()
  const [kestrel] = await db.select().from(firms).where(eq(firms.slug, DEMO.otherFirm))
  return JSON.stringify({
    projects: await db.select().from(projects).where(eq(projects.firmId, kestrel!.id)).orderBy(projects.id),
    members: await db.select().from(memberships).where(eq(memberships.firmId, kestrel!.id)).orderBy(memberships.id),
    invitations: await db.select().from(invitations).where(eq(invitations.firmId, kestrel!.id)).orderBy(invitations.id),
    instruments: await db.select().from(instrumentProfiles).where(eq(instrumentProfiles.firmId, kestrel!.id)).orderBy(instrumentProfiles.id),
  })
}

describe('firm isolation', () => {
  for (const r of ROUTES) {
    const hasIds = /:(?!firm)\w+/.test(r.path)
    it(`${r.method} ${r.path} answers 401 without a session`, async () => {
      const res = await new Client().request(r.method, fill(r.path, DEMO.firm), r.body)
      expect(res.status).toBe(401)
    })
    it(`${r.method} ${r.path} answers 404 for another firm's slug${hasIds ? ' and ids' : ''}`, async () => {
      const before = await snapshot()
      const res = await owner.request(r.method, fill(r.path, DEMO.otherFirm), r.body)
      expect(res.status, JSON.stringify(res.body)).toBe(404)
      expect(await snapshot()).toBe(before)
    })
    if (hasIds) {
      it(`${r.method} ${r.path} answers 404 for another firm's ids under one's own firm`, async () => {
        const before = await snapshot()
        const res = await owner.request(r.method, fill(r.path, DEMO.firm), r.body)
        expect(res.status, JSON.stringify(res.body)).toBe(404)
        expect(await snapshot()).toBe(before)
      })
    }
  }
})
