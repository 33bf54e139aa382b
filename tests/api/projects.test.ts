// Projects API against the real server and database: create, read, update,
// roles, tenancy and validation (DESIGN.md section 7).
import { afterAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { as, Client, DEMO } from '../support/http'
import { closeDb, useDb, usePool } from '../../server/db/client'
import { projects } from '../../server/db/schema'

const base = `/api/firms/${DEMO.firm}/projects`

afterAll(() => closeDb())

describe('projects', () => {
  it('health answers only with a live database', async () => {
    const r = await new Client().get('/api/health')
    expect(r.status).toBe(200)
    expect(r.body).toEqual({ ok: true, db: true })
  })

  it('a party chief creates a project and reads it back', async () => {
    const chief = await as(DEMO.chief)
    const created = await chief.post(base, { name: 'Mill Road widening', crs: 'EPSG:32633', units: 'm', description: 'invented' })
    expect(created.status).toBe(201)
    expect(created.body.id).toBeGreaterThan(0)
    expect(created.body.crsName).toBe('WGS 84 / UTM zone 33N')
    const read = await chief.get(`${base}/${created.body.id}`)
    expect(read.status).toBe(200)
    expect(read.body.name).toBe('Mill Road widening')
    const [row] = await useDb().select().from(projects).where(eq(projects.id, created.body.id))
    expect(row!.crsDefinition).toContain('+proj=utm +zone=33')
  })

  it('updates a project and records it in the audit log', async () => {
    const chief = await as(DEMO.chief)
    const created = await chief.post(base, { name: 'Audit me', crs: 'local', units: 'ft' })
    const patched = await chief.patch(`${base}/${created.body.id}`, { units: 'usft', angleFormat: 'gon' })
    expect(patched.status).toBe(200)
    expect(patched.body.units).toBe('usft')
    expect(patched.body.angleFormat).toBe('gon')
    const { rows } = await usePool()
      .query('select action from audit_log where entity_type = $1 and entity_id = $2 order by id', ['project', String(created.body.id)])
    expect(rows.map((r) => r.action)).toEqual(['project.create', 'project.update'])
  })

  it('geodetic settings: defaults k = 0.13 ± 0.05 (common practice), N = 0, no project height; a chief sets them, bad values answer 422 naming the field', async () => {
    const chief = await as(DEMO.chief)
    const created = await chief.post(base, { name: `Geodesy ${Date.now()}`, crs: 'EPSG:32633', units: 'm' })
    expect(created.body).toMatchObject({ refractionK: 0.13, refractionSigmaK: 0.05, geoidSeparationM: 0, projectHeightM: null })
    const patched = await chief.patch(`${base}/${created.body.id}`, { geoidSeparationM: 47.3, refractionK: 0.1, refractionSigmaK: 0.02 })
    expect(patched.status).toBe(200)
    expect(patched.body).toMatchObject({ geoidSeparationM: 47.3, refractionK: 0.1, refractionSigmaK: 0.02 })
    const local = await chief.post(base, { name: `Local height ${Date.now()}`, crs: 'local', units: 'm' })
    expect((await chief.patch(`${base}/${local.body.id}`, { projectHeightM: 412.5 })).body.projectHeightM).toBe(412.5)
    expect((await chief.patch(`${base}/${local.body.id}`, { projectHeightM: null })).body.projectHeightM).toBeNull()
    for (const [field, value] of [['refractionK', 2], ['refractionSigmaK', -0.1], ['geoidSeparationM', 500], ['projectHeightM', 'high']] as const) {
      const bad = await chief.patch(`${base}/${created.body.id}`, { [field]: value })
      expect(bad.status, field).toBe(422)
      expect(bad.body.errors.map((e: { field: string }) => e.field)).toContain(field)
    }
    const [row] = await useDb().select().from(projects).where(eq(projects.id, created.body.id))
    expect(row!.refractionK).toBe(0.1)
  })

  it('lists projects with counts; a client sees only the projects shared with it', async () => {
    const owner = await as(DEMO.owner)
    const all = await owner.get(base)
    expect(all.status).toBe(200)
    expect(all.body.length).toBeGreaterThan(1)
    expect(all.body[0].counts).toHaveProperty('stations')
    const client = await as(DEMO.client)
    const shared = await client.get(base)
    expect(shared.status).toBe(200)
    // Other suites may share more projects with the client: the list must be exactly the granted ones.
    const { rows } = await usePool().query(
      `select pa.project_id from project_access pa join users u on u.id = pa.user_id join firms f on f.id = pa.firm_id
       where u.email = $1 and f.slug = $2 order by 1`, [DEMO.client, DEMO.firm])
    const granted = rows.map((r) => r.project_id)
    expect(shared.body.map((p: { id: number }) => p.id).sort((a: number, b: number) => a - b)).toEqual(granted)
    expect(shared.body.map((p: { name: string }) => p.name)).toContain('Harrow Creek bridge control')
    expect(granted.length).toBeLessThan(all.body.length)
  })

  it('counts in the project list belong to each project, not to the whole firm (regression)', async () => {
    const chief = await as(DEMO.chief)
    const fresh = await chief.post(base, { name: 'Empty counts check', crs: 'local', units: 'm' })
    const list = await chief.get(base)
    const row = list.body.find((p: { id: number }) => p.id === fresh.body.id)
    expect(row.counts).toEqual({ stations: 0, observations: 0, runs: 0 })
    const demo = list.body.find((p: { name: string }) => p.name === 'Harrow Creek bridge control')
    expect(demo.counts.observations).toBeGreaterThan(0)
  })

  it('field crew may not create projects (403); a client gets 404', async () => {
    const crew = await as(DEMO.crew)
    expect((await crew.post(base, { name: 'x', crs: 'local', units: 'm' })).status).toBe(403)
    const client = await as(DEMO.client)
    expect((await client.post(base, { name: 'x', crs: 'local', units: 'm' })).status).toBe(404)
  })

  it("another firm's project answers 404, and so does a firm one is not in", async () => {
    const other = await as(DEMO.other)
    const [theirs] = await useDb().select().from(projects).where(eq(projects.name, 'Quarry Lane boundary'))
    const chief = await as(DEMO.chief)
    expect((await chief.get(`${base}/${theirs!.id}`)).status).toBe(404)
    expect((await chief.get(`/api/firms/${DEMO.otherFirm}/projects/${theirs!.id}`)).status).toBe(404)
    expect((await chief.patch(`${base}/${theirs!.id}`, { name: 'taken' })).status).toBe(404)
    expect((await other.get(`/api/firms/${DEMO.otherFirm}/projects/${theirs!.id}`)).status).toBe(200)
  })

  it('without a session every project route answers 401', async () => {
    const anon = new Client()
    expect((await anon.get(base)).status).toBe(401)
    expect((await anon.post(base, { name: 'x', crs: 'local', units: 'm' })).status).toBe(401)
  })

  it('bad input names the field and writes nothing', async () => {
    const chief = await as(DEMO.chief)
    const before = (await useDb().select().from(projects)).length
    const malformed = await chief.post(base, '{"name": "unterminated')
    expect(malformed.status).toBe(400)
    expect(malformed.body.message).toMatch(/JSON/)
    const invalid = await chief.post(base, { name: 'y'.repeat(121), crs: 'EPSG:0', units: 'furlong' })
    expect(invalid.status).toBe(422)
    const fields = invalid.body.errors.map((e: { field: string }) => e.field).sort()
    expect(fields).toEqual(['crs', 'name', 'units'])
    const missing = await chief.post(base, {})
    expect(missing.status).toBe(422)
    expect(missing.body.errors.map((e: { field: string }) => e.field).sort()).toEqual(['crs', 'name', 'units'])
    expect((await useDb().select().from(projects)).length).toBe(before)
  })
})
