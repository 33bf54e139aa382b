// Stations and control against the real server and database: rename carries
// observations, control import is all-or-nothing with line errors, values are
// stored in metres (international foot = 0.3048 m exactly: NIST Handbook 44, App. C).
import { eq, or, sql } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeDb, useDb } from '../../server/db/client'
import { observations } from '../../server/db/schema'
import { as, DEMO, type Client } from '../support/http'
import { auditRows, counts, fileForm, freshProject } from './fielddata-helpers'

const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'
let chief: Client, crew: Client, other: Client
const base = (p: number) => `/api/firms/${DEMO.firm}/projects/${p}`

beforeAll(async () => { [chief, crew, other] = await Promise.all([as(DEMO.chief), as(DEMO.crew), as(DEMO.other)]) })
afterAll(async () => { await closeDb() })

describe('stations', () => {
  it('creates, edits and lists stations; field crew may not; another firm sees 404', async () => {
    const p = await freshProject(chief, 'Stations')
    const c = await chief.post(`${base(p)}/stations`, { name: 'T1', description: 'nail in kerb', controlEast: 100.5, controlNorth: 200.25, sdEast: 0.005, sdNorth: 0.005 })
    expect(c.status).toBe(201)
    expect(c.body.kind).toBe('control')
    expect(c.body.horizontal).toBe('weighted')
    const again = await chief.post(`${base(p)}/stations`, { name: 'T1', controlEast: 101, controlNorth: 201 })
    expect(again.status).toBe(200)
    expect(again.body.controlEast).toBe(101)
    const half = await chief.post(`${base(p)}/stations`, { name: 'T2', controlEast: 1 })
    expect(half.status).toBe(422)
    const edit = await chief.patch(`${base(p)}/stations/${c.body.id}`, { sdEast: null, sdNorth: null })
    expect(edit.body.horizontal).toBe('fixed')
    expect((await crew.post(`${base(p)}/stations`, { name: 'T3' })).status).toBe(403)
    expect((await other.get(`${base(p)}/stations`)).status).toBe(404)
    expect((await other.patch(`${base(p)}/stations/${c.body.id}`, { name: 'X' })).status).toBe(404)
    const list = await crew.get(`${base(p)}/stations`)
    expect(list.body.map((s: { name: string }) => s.name)).toEqual(['T1'])
    const audit = await auditRows('station', c.body.id)
    expect(audit.map((a) => a.action)).toEqual(expect.arrayContaining(['station.create', 'station.update']))
  })

  it('renaming a station updates every observation that uses it, in one go', async () => {
    const p = await freshProject(chief, 'Rename')
    const text = [HEADER,
      'direction,OLD,,B,10 00 00,dms,,,,,,',
      'angle,B,OLD,C,90 00 00,dms,,,,,,',
      'horizontal_distance,C,,OLD,25.0,m,2,,,,,',
      'horizontal_distance,B,,C,30.0,m,2,,,,,'].join('\n')
    expect((await chief.post(`${base(p)}/observation-sets`, fileForm('r.csv', text))).status).toBe(201)
    const st = await chief.get(`${base(p)}/stations`)
    const old = st.body.find((s: { name: string }) => s.name === 'OLD')
    expect(old.kind).toBe('new') // referenced but not defined → appears as new
    expect(old.observationCount).toBe(3)
    const r = await chief.patch(`${base(p)}/stations/${old.id}`, { name: 'NEW1' })
    expect(r.status).toBe(200)
    expect(r.body.renamedObservations).toBe(3)
    const uses = (name: string) => useDb().select({ n: sql<number>`count(*)::int` }).from(observations)
      .where(sql`${observations.projectId} = ${p} and (${observations.at} = ${name} or ${observations.from} = ${name} or ${observations.to} = ${name})`)
    expect((await uses('OLD'))[0]!.n).toBe(0)
    expect((await uses('NEW1'))[0]!.n).toBe(3)
    const clash = await chief.patch(`${base(p)}/stations/${old.id}`, { name: 'B' })
    expect(clash.status).toBe(409)
    expect((await uses('NEW1'))[0]!.n).toBe(3)
    const audit = await auditRows('station', old.id)
    expect(audit.map((a) => a.action)).toContain('station.rename')
    expect((audit.find((a) => a.action === 'station.rename')!.before as { name: string }).name).toBe('OLD')
  })

  it('lists stations and sorts observations by station in natural order (KF2 before KF10), in SQL', async () => {
    const p = await freshProject(chief, 'Natural order')
    const text = [HEADER,
      'horizontal_distance,KF10,,KF2,25.0,m,2,,,,,',
      'horizontal_distance,KF2,,KF1,30.0,m,2,,,,,',
      'horizontal_distance,KF1,,KF10,31.0,m,2,,,,,',
      'horizontal_distance,KF9,,KF1,32.0,m,2,,,,,'].join('\n')
    expect((await chief.post(`${base(p)}/observation-sets`, fileForm('n.csv', text))).status).toBe(201)
    const st = await chief.get(`${base(p)}/stations`)
    expect(st.body.map((s: { name: string }) => s.name)).toEqual(['KF1', 'KF2', 'KF9', 'KF10'])
    const byAt = await chief.get(`${base(p)}/observations?sort=at&dir=asc`)
    expect(byAt.body.rows.map((o: { at: string }) => o.at)).toEqual(['KF1', 'KF2', 'KF9', 'KF10'])
    const byToDesc = await chief.get(`${base(p)}/observations?sort=to&dir=desc`)
    expect(byToDesc.body.rows.map((o: { to: string }) => o.to)).toEqual(['KF10', 'KF2', 'KF1', 'KF1'])
  })
})

describe('control import', () => {
  it('imports control in project units and σ in mm, stored in metres', async () => {
    const p = await freshProject(chief, 'Control ft', 'ft')
    const csv = 'name,east,north,height,sdEast,sdNorth,sdHeight\nP1,1000,2000,100\nP2,1500.5,2500,,5,5\n'
    const r = await chief.post(`${base(p)}/stations/import`, { text: csv })
    expect(r.status).toBe(200)
    expect(r.body.created).toBe(2)
    const st = await chief.get(`${base(p)}/stations`)
    const p1 = st.body.find((s: { name: string }) => s.name === 'P1')
    const p2 = st.body.find((s: { name: string }) => s.name === 'P2')
    expect(p1.controlEast).toBeCloseTo(1000 * 0.3048, 9)
    expect(p1.controlNorth).toBeCloseTo(2000 * 0.3048, 9)
    expect(p1.controlHeight).toBeCloseTo(100 * 0.3048, 9)
    expect(p1.horizontal).toBe('fixed')
    expect(p2.sdEast).toBeCloseTo(0.005, 12)
    expect(p2.controlHeight).toBeNull()
    // a second import updates instead of duplicating
    const r2 = await chief.post(`${base(p)}/stations/import`, fileForm('c.csv', 'P1,1001,2000\n'))
    expect(r2.body.updated).toBe(1)
  })

  it('refuses a control file with bad lines, listing every one, writing nothing', async () => {
    const p = await freshProject(chief, 'Control bad')
    const before = await counts(p)
    const csv = 'Q1,100,200\nQ2,abc,200\nQ3,100\nQ4,100,200,50,-1,2\n'
    const r = await chief.post(`${base(p)}/stations/import`, { text: csv })
    expect(r.status).toBe(422)
    expect([...new Set(r.body.errors.map((e: { line: number }) => e.line))].sort()).toEqual([2, 3, 4])
    expect(r.body.errors.find((e: { line: number }) => e.line === 2).column).toBe('east')
    expect(await counts(p)).toEqual(before)
  })
})
