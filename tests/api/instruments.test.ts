// Instrument profiles and crews against the real server and database:
// who may manage them, firm isolation, example labels, project assignment.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeDb } from '../../server/db/client'
import { as, DEMO, type Client } from '../support/http'
import { auditRows, fileForm, freshProject } from './fielddata-helpers'

let owner: Client, chief: Client, crew: Client, client: Client, other: Client
const firm = `/api/firms/${DEMO.firm}`
const profile = (name: string) => ({ name, distanceMm: 1, distancePpm: 1.5, directionArcsec: 1, zenithArcsec: 1.5, centeringInstrumentMm: 0.8, centeringTargetMm: 1, levellingMmPerSqrtKm: 1 })

beforeAll(async () => {
  ;[owner, chief, crew, client, other] = await Promise.all([as(DEMO.owner), as(DEMO.chief), as(DEMO.crew), as(DEMO.client), as(DEMO.other)])
})
afterAll(async () => { await closeDb() })

describe('instrument profiles', () => {
  it('lists example presets with their label; owner and party chief manage; others may not', async () => {
    const list = await crew.get(`${firm}/instruments`)
    expect(list.status).toBe(200)
    const ex = list.body.filter((i: { isExample: boolean }) => i.isExample)
    expect(ex.length).toBeGreaterThan(0)
    expect(ex.every((i: { label: string }) => i.label === "example, not a maker's specification")).toBe(true)
    const name = `Office 2″ ${Date.now()}`
    const c = await chief.post(`${firm}/instruments`, profile(name))
    expect(c.status).toBe(201)
    expect(c.body.isExample).toBe(false)
    expect((await owner.post(`${firm}/instruments`, profile(name))).status).toBe(409)
    expect((await crew.post(`${firm}/instruments`, profile(`${name} b`))).status).toBe(403)
    expect((await client.get(`${firm}/instruments`)).status).toBe(404)
    expect((await chief.post(`${firm}/instruments`, { ...profile(`${name} c`), directionArcsec: -1 })).status).toBe(422)
    const e = await owner.patch(`${firm}/instruments/${c.body.id}`, { directionArcsec: 2 })
    expect(e.body.directionArcsec).toBe(2)
    // another firm: neither its list shows ours nor may it touch it
    const theirs = await other.get(`/api/firms/${DEMO.otherFirm}/instruments`)
    expect(theirs.body.some((i: { id: number }) => i.id === c.body.id)).toBe(false)
    expect((await other.patch(`/api/firms/${DEMO.otherFirm}/instruments/${c.body.id}`, { directionArcsec: 9 })).status).toBe(404)
    expect((await other.patch(`${firm}/instruments/${c.body.id}`, { directionArcsec: 9 })).status).toBe(404)
    const audit = await auditRows('instrument_profile', c.body.id)
    expect(audit.map((a) => a.action)).toEqual(['instrument.create', 'instrument.update'])
    expect((await owner.delete(`${firm}/instruments/${c.body.id}`)).status).toBe(204)
  })

  it('a profile without a levelling σ refuses levelling rows left without a sigma', async () => {
    const c = await chief.post(`${firm}/instruments`, { ...profile(`No level ${Date.now()}`), levellingMmPerSqrtKm: 0 })
    const p = await freshProject(chief, 'Profile gap')
    const text = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note\nheight_difference,A,,B,1.234,m,,,,,0.5,\n'
    const r = await chief.post(`/api/firms/${DEMO.firm}/projects/${p}/observation-sets`, fileForm('lv.csv', text, { instrumentProfileId: String(c.body.id) }))
    expect(r.status).toBe(422)
    expect(r.body.errors[0]).toMatchObject({ line: 2, column: 'sigma' })
  })
})

describe('crews', () => {
  it('creates a crew with members, assigns it to a project, and isolates firms', async () => {
    const me = await crew.get('/api/me')
    const name = `Test crew ${Date.now()}`
    const c = await chief.post(`${firm}/crews`, { name, memberIds: [me.body.user.id] })
    expect(c.status).toBe(201)
    expect(c.body.members).toHaveLength(1)
    expect((await crew.post(`${firm}/crews`, { name: `${name} x` })).status).toBe(403)
    const outsider = await other.get('/api/me')
    const bad = await chief.patch(`${firm}/crews/${c.body.id}`, { memberIds: [outsider.body.user.id] })
    expect(bad.status).toBe(422)
    const p = await freshProject(chief, 'Crew assign', 'm', false)
    const a = await chief.post(`${firm}/projects/${p}/crews`, { crewId: c.body.id })
    expect(a.status).toBe(201)
    expect(a.body.map((x: { id: number }) => x.id)).toEqual([c.body.id])
    expect((await other.post(`/api/firms/${DEMO.otherFirm}/projects/${p}/crews`, { crewId: c.body.id })).status).toBe(404)
    expect((await chief.delete(`${firm}/projects/${p}/crews/${c.body.id}`)).status).toBe(204)
    expect((await chief.get(`${firm}/projects/${p}/crews`)).body).toEqual([])
    const audit = await auditRows('crew', c.body.id)
    expect(audit.map((x) => x.action)).toContain('crew.create')
  })
})
