// Crews cannot move control: a field crew's upload that carries control
// (CSV `control` rows, LandXML CgPoints with pntSurv="control", typed-in
// control rows) answers 422 naming each such line, and nothing is saved —
// neither the set nor any held coordinate. A party chief may upload the same.
import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeDb } from '../../server/db/client'
import { as, DEMO, type Client } from '../support/http'
import { counts, fileForm, freshProject } from './fielddata-helpers'

const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'
const DEMO_XML = readFileSync('server/db/demo/demo-network.xml', 'utf8')
const base = (p: number) => `/api/firms/${DEMO.firm}/projects/${p}`

let chief: Client, crew: Client
beforeAll(async () => { [chief, crew] = await Promise.all([as(DEMO.chief), as(DEMO.crew)]) })
afterAll(async () => { await closeDb() })

const station = async (p: number, name: string) =>
  (await chief.get(`${base(p)}/stations`)).body.find((s: { name: string }) => s.name === name)

describe('control from a field crew', () => {
  it('a CSV with control rows answers 422 naming each control line, and the held coordinates stay as they were', async () => {
    const p = await freshProject(chief, 'Crew control CSV')
    const held = `${HEADER}\ncontrol,K1,,,1000 2000,m,,,,,,held by the chief\nhorizontal_distance,K1,,K2,50.000,m,2,,,,,\n`
    expect((await chief.post(`${base(p)}/observation-sets`, fileForm('held.csv', held))).status).toBe(201)
    const before = await counts(p)

    const moved = `${HEADER}\nhorizontal_distance,K1,,K3,40.000,m,2,,,,,\ncontrol,K1,,,1000.5 2000.5,m,,,,,,moved by the crew\ncontrol,K9,,,10 20,m,,,,,,\n`
    const r = await crew.post(`${base(p)}/observation-sets`, fileForm('moved.csv', moved))
    expect(r.status).toBe(422)
    expect(r.body.message).toMatch(/nothing was saved/)
    expect(r.body.errors).toEqual([
      { line: 3, column: 'kind', message: expect.stringMatching(/control point 'K1'.*only a party chief or licensed surveyor/) },
      { line: 4, column: 'kind', message: expect.stringMatching(/control point 'K9'/) },
    ])
    expect(await counts(p)).toEqual(before)
    const k1 = await station(p, 'K1')
    expect([k1.controlEast, k1.controlNorth]).toEqual([1000, 2000])
    expect(await station(p, 'K9')).toBeUndefined()

    // the same measurements without the control rows are welcome
    const fine = `${HEADER}\nhorizontal_distance,K1,,K3,40.000,m,2,,,,,\n`
    expect((await crew.post(`${base(p)}/observation-sets`, fileForm('fine.csv', fine))).status).toBe(201)
  })

  it('a LandXML file with control CgPoints answers 422 naming their lines; the chief may upload it', async () => {
    const p = await freshProject(chief, 'Crew control LandXML')
    const r = await crew.post(`${base(p)}/observation-sets`, fileForm('network.xml', DEMO_XML))
    expect(r.status).toBe(422)
    const lines = DEMO_XML.split('\n')
    const controlLines = lines.flatMap((l, i) => (/<CgPoint [^>]*pntSurv="control"/.test(l) ? [i + 1] : []))
    expect(controlLines.length).toBeGreaterThan(1)
    expect(r.body.errors.map((e: { line: number }) => e.line)).toEqual(controlLines)
    expect(r.body.errors.every((e: { column: string }) => e.column === 'CgPoint@pntSurv')).toBe(true)
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
    expect((await chief.post(`${base(p)}/observation-sets`, fileForm('network.xml', DEMO_XML))).status).toBe(201)
  })

  it('typed-in control rows from a crew answer 422 naming the grid row', async () => {
    const p = await freshProject(chief, 'Crew control typed')
    const row = (kind: string, at: string, to: string, value: string) => ({ kind, at, from: '', to, value, unit: 'm', sigma: '', hi: '', ht: '', set: '', length: '', note: '' })
    const r = await crew.post(`${base(p)}/observation-sets/manual`, { rows: [row('horizontal_distance', 'A', 'B', '10.0'), row('control', 'A', '', '5 6')] })
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([{ line: 3, column: 'kind', field: 'rows.1.kind', message: expect.stringMatching(/^row 2, kind: sets the held coordinates of control point 'A'/) }])
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
  })
})
