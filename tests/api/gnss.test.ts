// GNSS baselines in the app (docs/file-format.md, docs/api.md): vectors stored
// from an upload and from the typed-in grid in a georeferenced project; refused
// in a local-plane project with nothing written; the run's vector results
// (written into the result tables the way the worker's COPY writes them)
// folded per vector on their own route, on the map, through sign-off and every
// release format, and excluded whole. Expected values are the fixture's own
// numbers, written here by hand.
import { and, asc, eq } from 'drizzle-orm'
import Papa from 'papaparse'
import { extractText, getDocumentProxy } from 'unpdf'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeDb, useDb } from '../../server/db/client'
import { adjustments, observationResults, observations, projects, runOverviews } from '../../server/db/schema'
import { unpackMap } from '../../shared/map-overview'
import { readLandXml } from '../../server/engine/io/landxml'
import { as, DEMO, type Client } from '../support/http'
import { counts, fileForm, freshProject } from './fielddata-helpers'
import { readFileSync } from 'node:fs'
import { runDone } from '../support/http'
import { finishedRun } from './signoffs-fixture'

let chief: Client, other: Client, surveyor: Client
const base = (p: number) => `/api/firms/${DEMO.firm}/projects/${p}`

// Invented marks and vectors (not a real network): lines 3–4 are vectors, line 5 a distance.
const CSV = [
  '# GNSS test file',
  'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note,correlation',
  'gnss_baseline,VG1,,VG2,412.3456 -233.1000 318.0020,m,3.0 2.5 4.0,,,,,session A,0.25 -0.10 0.30',
  'gnss_baseline,VG2,,VG3,-120.0000 560.5000 -75.2500,,2 2 3,,,,,session A,',
  'slope_distance,VG1,,VG3,650.123,m,3,1.5,1.6,,,',
].join('\n') + '\n'

async function georeferenced(name: string): Promise<number> {
  const r = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `${name} ${Date.now()} ${Math.random().toString(36).slice(2, 6)}`, crs: 'EPSG:32633', units: 'm' })
  if (r.status !== 201) throw new Error(`project: ${r.status} ${JSON.stringify(r.body)}`)
  const n = await chief.patch(base(r.body.id), { geoidSeparationM: 46.2 })
  if (n.status !== 200) throw new Error(`geoid N: ${n.status} ${JSON.stringify(n.body)}`)
  return r.body.id
}

beforeAll(async () => {
  ;[chief, other, surveyor] = await Promise.all([as(DEMO.chief), as(DEMO.other), as(DEMO.surveyor)])
})
afterAll(async () => { await closeDb() })

describe('vectors into a georeferenced project', () => {
  let p: number
  beforeAll(async () => { p = await georeferenced('GNSS upload') })

  it('an upload stores each vector (m), its σ (m) and ρ in observations.vector, and the length as value', async () => {
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('vectors.csv', CSV))
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.observations).toBe(3)
    const rows = await useDb().select().from(observations).where(eq(observations.projectId, p)).orderBy(asc(observations.line))
    expect(rows.map((o) => [o.line, o.kind])).toEqual([[3, 'gnss_baseline'], [4, 'gnss_baseline'], [5, 'slope_distance']])
    expect(rows[0]!.vector).toEqual({ d: [412.3456, -233.1, 318.002], sigma: [0.003, 0.0025, 0.004], correlation: [0.25, -0.1, 0.3] })
    expect(rows[1]!.vector).toEqual({ d: [-120, 560.5, -75.25], sigma: [0.002, 0.002, 0.003], correlation: null })
    expect(rows[2]!.vector).toBeNull()
    // √(412.3456² + 233.1² + 318.002²) = 570.3225… m (by hand)
    expect(rows[0]!.value).toBeCloseTo(Math.sqrt(412.3456 ** 2 + 233.1 ** 2 + 318.002 ** 2), 9)
  })

  it('the observation list shows the three components and σ readably, with the correlations', async () => {
    const list = await chief.get(`${base(p)}/observations?kind=gnss_baseline&sort=line`)
    expect(list.status).toBe(200)
    expect(list.body.rows[0]).toMatchObject({ display: 'ΔX 412.3456  ΔY −233.1000  ΔZ 318.0020', displayUnit: 'm', sigmaDisplay: '3.0 / 2.5 / 4.0 mm', sigmaSource: 'file' })
    expect(list.body.rows[0].vector.correlation).toEqual([0.25, -0.1, 0.3])
  })

  it('a vector cannot be value-edited (one number is not a vector) but can be excluded', async () => {
    const [row] = await useDb().select().from(observations).where(and(eq(observations.projectId, p), eq(observations.line, 4)))
    const edit = await chief.patch(`${base(p)}/observations/${row!.id}`, { valueText: '600' })
    expect(edit.status).toBe(422)
    expect(edit.body.errors[0].message).toMatch(/GNSS vector is not edited here/)
    const ex = await chief.patch(`${base(p)}/observations/${row!.id}`, { excluded: true })
    expect(ex.status).toBe(200)
    expect(ex.body.excluded).toBe(true)
  })

  it('typed-in rows take a vector with its three-number fields; a bad correlation names the grid row and column', async () => {
    const good = await chief.post(`${base(p)}/observation-sets/manual`, { rows: [{ kind: 'gnss_baseline', at: 'VG3', to: 'VG4', value: '10.5 -20.25 30', sigma: '4 4 6', correlation: '0.1 0.2 0.3' }] })
    expect(good.status, JSON.stringify(good.body)).toBe(201)
    const [stored] = await useDb().select().from(observations).where(and(eq(observations.projectId, p), eq(observations.setId, good.body.id)))
    expect(stored!.vector).toEqual({ d: [10.5, -20.25, 30], sigma: [0.004, 0.004, 0.006], correlation: [0.1, 0.2, 0.3] })
    const before = await counts(p)
    const bad = await chief.post(`${base(p)}/observation-sets/manual`, { rows: [
      { kind: 'slope_distance', at: 'VG1', to: 'VG4', value: '100.0', sigma: '3' },
      { kind: 'gnss_baseline', at: 'VG3', to: 'VG5', value: '10 20 30', sigma: '4 4 6', correlation: '0.9 0.9 -0.9' },
    ] })
    expect(bad.status).toBe(422)
    expect(bad.body.errors).toEqual([expect.objectContaining({ field: 'rows.1.correlation', message: expect.stringMatching(/^row 2, correlation: .*not positive definite/) })])
    expect(await counts(p)).toEqual(before)
  })

  it('another firm cannot see the project or its vectors (404)', async () => {
    expect((await other.get(`${base(p)}/observations?kind=gnss_baseline`)).status).toBe(404)
    expect((await other.post(`${base(p)}/observation-sets`, fileForm('again.csv', CSV.replace('GNSS test file', 'other')))).status).toBe(404)
  })
})

describe('vectors in a georeferenced project whose N was never set', () => {
  it('are stored, with one warning on the first vector line that N is still 0 m', async () => {
    const r0 = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `GNSS no N ${Date.now()}`, crs: 'EPSG:32633', units: 'm' })
    const r = await chief.post(`${base(r0.body.id)}/observation-sets`, fileForm('vectors.csv', CSV))
    expect(r.status).toBe(201)
    expect(r.body.warnings).toEqual([expect.objectContaining({ line: 3, column: 'kind', message: expect.stringMatching(/geoid separation N is 0 m/) })])
  })
})

describe('vectors in a local-plane project', () => {
  it('are refused at upload with line and column, saying a projected CRS and N are needed; nothing is written', async () => {
    const r0 = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `GNSS local ${Date.now()}`, crs: 'local', units: 'm' })
    const p = r0.body.id as number
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('vectors.csv', CSV))
    expect(r.status).toBe(422)
    expect(r.body.errors.map((e: any) => [e.line, e.column])).toEqual([[3, 'kind'], [4, 'kind']])
    expect(r.body.errors[0].message).toMatch(/projected CRS.*geoid separation N/)
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
    const typed = await chief.post(`${base(p)}/observation-sets/manual`, { rows: [{ kind: 'gnss_baseline', at: 'A', to: 'B', value: '1 2 3', sigma: '3 3 3' }] })
    expect(typed.status).toBe(422)
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
  })
})

describe('LandXML 1.2 vectors (public/formats/tiepoint-example-gnss.xml) into a georeferenced project, adjusted', () => {
  // The example file: pillar W01 held, four vectors W01→W02, W01→W03, W02→W03, W01→T1 (counted by hand),
  // each covariance D·R·D of the CSV example's σ and ρ, in m².
  const xml = readFileSync('public/formats/tiepoint-example-gnss.xml')
  let api: string
  let number: number
  beforeAll(async () => {
    const r = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `GNSS LandXML ${Date.now()}`, crs: 'EPSG:25833', units: 'm' })
    api = base(r.body.id)
    await chief.patch(api, { geoidSeparationM: 44.87 })
  })

  it('the upload stores each GPSVector as one vector with σ = √variance and ρ = covariance / (σ·σ)', async () => {
    const up = await chief.post(`${api}/observation-sets`, fileForm('vectors.xml', xml))
    expect(up.status, JSON.stringify(up.body)).toBe(201)
    expect(up.body.observations).toBe(4)
    const list = await chief.get(`${api}/observations?kind=gnss_baseline&sort=line`)
    expect(list.body.rows.map((o: any) => [o.at, o.to])).toEqual([['W01', 'W02'], ['W01', 'W03'], ['W02', 'W03'], ['W01', 'T1']])
    const v = list.body.rows[0].vector
    expect(v.d).toEqual([-1755.75, 1963.3372, 884.397])
    // covarianceXX = 1.56816e-5 m² → σX = 3.96 mm; covarianceXY = 2.46518316e-6 → ρXY = 2.46518316e-6 / (0.00396·0.00263) = 0.2367 (by hand)
    expect(v.sigma[0]).toBeCloseTo(0.00396, 12)
    expect(v.correlation[0]).toBeCloseTo(0.2367, 9)
  })

  it('a run adjusts the four vectors in 3D; the triangle\'s vectors are tested, T1\'s lone vector (no redundancy) is not', async () => {
    const q = await chief.post(`${api}/adjustments`, {})
    expect(q.status, JSON.stringify(q.body)).toBe(202)
    number = q.body.number
    await runDone(chief, `${api}/adjustments/${number}/status`, 120_000)
    const v = await chief.get(`${api}/adjustments/${number}/vectors?sort=line`)
    expect(v.body.total).toBe(4)
    expect(v.body.rows.map((x: any) => x.test !== null)).toEqual([true, true, true, false])
  })

  it('compare: later sessions give T1\'s vector a test; each vector\'s T in both runs and its change, server-side, paged', async () => {
    // two more vectors, invented: T1 − W03 and T1 − W02 from the example's vectors, plus about 2 mm of noise
    const header = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note,correlation\n'
    const session = async (name: string, row: string) => {
      expect((await chief.post(`${api}/observation-sets`, fileForm(name, header + row + '\n'))).status).toBe(201)
      const q = await chief.post(`${api}/adjustments`, {})
      await runDone(chief, `${api}/adjustments/${q.body.number}/status`, 120_000)
      return q.body.number as number
    }
    const second = await session('second.csv', 'gnss_baseline,W03,,T1,562.0130 -3474.3150 241.2150,m,3 3 5,,,,,second session,')
    const c = await chief.get(`${api}/adjustments/compare?a=${number}&b=${second}&size=2`)
    expect(c.status, JSON.stringify(c.body)).toBe(200)
    expect(c.body.vectors.total).toBe(5)
    // the two whose verdict changed come first: W01→T1 (not tested → tested) and the new W03→T1 (not in run A)
    const first = c.body.vectors.rows
    expect(first.map((x: any) => `${x.at}-${x.to}`).sort()).toEqual(['W01-T1', 'W03-T1'])
    expect(first.find((x: any) => x.at === 'W03').a).toBeNull()
    const w01t1 = first.find((x: any) => x.at === 'W01')
    expect(w01t1.a).toMatchObject({ verdict: 'untested', statistic: null, distribution: null })
    expect(['pass', 'fail']).toContain(w01t1.b.verdict)
    expect(w01t1.change).toBeNull()
    // run A has r = 3 = q: its vectors are tested with χ² (σ0 taken as known); run B with F. T on different scales: no change given
    const triangle = (await chief.get(`${api}/adjustments/compare?a=${number}&b=${second}&size=5`)).body.vectors.rows.slice(2)
    for (const x of triangle) {
      expect([x.a.distribution, x.b.distribution]).toEqual(['chi2', 'F'])
      expect(x.change).toBeNull()
    }

    const third = await session('third.csv', 'gnss_baseline,W02,,T1,1787.8371 -1519.7410 -990.0785,m,3 3 5,,,,,third session,')
    const page = async (vpage: number) => (await chief.get(`${api}/adjustments/compare?a=${second}&b=${third}&size=2&vpage=${vpage}`)).body.vectors
    const p1 = await page(1)
    expect(p1.total).toBe(6)
    const rows = [...p1.rows, ...(await page(2)).rows, ...(await page(3)).rows]
    expect(rows[0]).toMatchObject({ at: 'W02', to: 'T1', a: null }) // the one new vector: its verdict "changed" from absent
    const both = rows.slice(1)
    // each T is the run's own vectors route value; change = T(B) − T(A); largest |change| first
    const tests = async (n: number) => new Map<string, any>((await chief.get(`${api}/adjustments/${n}/vectors?size=50`)).body.rows.map((x: any) => [`${x.at}-${x.to}`, x.test]))
    const [tb, tc] = await Promise.all([tests(second), tests(third)])
    for (const x of both) {
      const k = `${x.at}-${x.to}`
      expect([x.a.distribution, x.b.distribution]).toEqual(['F', 'F'])
      expect(x.a.statistic).toBe(tb.get(k).statistic)
      expect(x.b.statistic).toBe(tc.get(k).statistic)
      expect(x.change).toBeCloseTo(tc.get(k).statistic - tb.get(k).statistic, 9)
    }
    const sizes = both.map((x) => Math.abs(x.change))
    expect(sizes).toEqual([...sizes].sort((p, q) => q - p))
    expect((await other.get(`${api}/adjustments/compare?a=${second}&b=${third}`)).status).toBe(404)
  })

  it('a local-plane project refuses the same file, naming each vector\'s line; nothing is written', async () => {
    const r0 = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `GNSS LandXML local ${Date.now()}`, crs: 'local', units: 'm' })
    const r = await chief.post(`${base(r0.body.id)}/observation-sets`, fileForm('vectors.xml', xml))
    expect(r.status).toBe(422)
    // the GPSVector start tags in the example file (counted by hand)
    expect(r.body.errors.map((e: any) => [e.line, e.column])).toEqual([[16, 'GPSVector'], [21, 'GPSVector'], [26, 'GPSVector'], [31, 'GPSVector']])
    expect(await counts(r0.body.id)).toEqual({ observations: 0, sets: 0, stations: 0 })
  })

  it('field crew uploading it to a local-plane project get every problem at once: the control CgPoint and each vector, by line', async () => {
    const p = await freshProject(chief, 'GNSS LandXML crew local')
    const crew = await as(DEMO.crew)
    const r = await crew.post(`${base(p)}/observation-sets`, fileForm('vectors.xml', xml))
    expect(r.status).toBe(422)
    // line 8: the example's control CgPoint; then its GPSVector start tags (counted by hand)
    expect(r.body.errors.map((e: any) => [e.line, e.column])).toEqual([[8, 'CgPoint@pntSurv'], [16, 'GPSVector'], [21, 'GPSVector'], [26, 'GPSVector'], [31, 'GPSVector']])
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
  })
})

describe('a run whose results hold vector rows', () => {
  let fx: Awaited<ReturnType<typeof finishedRun>>
  let runId: number
  // One vector A→B as three component rows, the way storeResults writes them:
  // the test values are invented (T = 14.2 against χ²(3) critical 16.27, α0 = 0.001:
  // NIST/SEMATECH e-Handbook §1.3.6.7.4, upper critical values of χ², ν = 3).
  const test = { vectorStatistic: 14.2, vectorCritical: 16.27, vectorDistribution: 'chi2', vectorFlagged: false, residualE: 0.0021, residualN: -0.0034, residualU: 0.0102 }

  beforeAll(async () => {
    // A real run of the (local-plane) demo network whose result tables then get
    // a vector's rows with chosen values — a flagged vector, say, which the
    // consistent demo data never gives. GeoJSON (not made for a local plane) is
    // checked on the real 3D run below.
    fx = await finishedRun(chief, 'GNSS results')
    const [run] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, fx.runNumber)))
    runId = run!.id
    const [a, b] = (await chief.get(`${fx.base}/adjustments/${fx.runNumber}/stations?sort=order&size=2`)).body.rows.map((s: any) => s.name)
    const row = (component: 'dx' | 'dy' | 'dz', observed: number, residual: number, w: number) => ({
      firmId: run!.firmId, adjustmentId: runId, observationId: null, line: 900, kind: 'gnss_baseline' as const, component, at: a, from: null, to: b,
      observed, adjusted: observed + residual, valueUnit: 'm', residual, sigma: 0.003, residualUnit: 'm', redundancy: 0.6, w, flagged: false, ...test,
    })
    await useDb().insert(observationResults).values([row('dx', 31.5, 0.002, 0.9), row('dy', -12.25, -0.001, -0.4), row('dz', 44.0, 0.011, 2.9)])
    // the overview kept with the run was made from its results as stored: rows added by hand need it made again
    await useDb().delete(runOverviews).where(eq(runOverviews.adjustmentId, runId))
  })

  it('the vectors route folds the three components into one vector with its test (firm-scoped)', async () => {
    const r = await chief.get(`${fx.base}/adjustments/${fx.runNumber}/vectors`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.total).toBe(1)
    expect(r.body.rows[0]).toMatchObject({
      line: 900, observed: [31.5, -12.25, 44], residual: [0.002, -0.001, 0.011], w: [0.9, -0.4, 2.9], excluded: false,
      test: { statistic: 14.2, critical: 16.27, distribution: 'chi2', flagged: false, residualEnu: [0.0021, -0.0034, 0.0102] },
    })
    expect((await chief.get(`${fx.base}/adjustments/${fx.runNumber}/vectors?flagged=1`)).body.total).toBe(0)
    expect((await other.get(`${fx.base}/adjustments/${fx.runNumber}/vectors`)).status).toBe(404)
    expect((await other.get(`/api/firms/${DEMO.otherFirm}/projects/${fx.projectId}/adjustments/${fx.runNumber}/vectors`)).status).toBe(404)
  })

  it('the paged observation route returns vectorTest on each component row, and the map marks the vector line', async () => {
    const obs = await chief.get(`${fx.base}/adjustments/${fx.runNumber}/observations?kind=gnss_baseline&sort=order`)
    expect(obs.body.rows.map((o: any) => o.component)).toEqual(['dx', 'dy', 'dz'])
    for (const o of obs.body.rows) expect(o.vectorTest).toEqual({ statistic: 14.2, critical: 16.27, distribution: 'chi2', flagged: false, residualEnu: [0.0021, -0.0034, 0.0102] })
    const plain = await chief.get(`${fx.base}/adjustments/${fx.runNumber}/observations?kind=slope_distance&size=1`)
    expect(plain.body.rows[0].vectorTest).toBeUndefined()
    const map = unpackMap((await chief.get(`${fx.base}/adjustments/${fx.runNumber}/overview`)).body)
    const kinds = Array.from(map.lineKind)
    expect(kinds.filter((v) => v === 1)).toHaveLength(1)
    // the vector's line joins its two marks
    const i = kinds.indexOf(1)
    expect([map.names[map.from[i]!], map.names[map.to[i]!]].sort()).toEqual([obs.body.rows[0].at, obs.body.rows[0].to].sort())
  })

  it('a flagged vector fails on the map and is counted by the flagged filter', async () => {
    await useDb().update(observationResults).set({ vectorFlagged: true }).where(and(eq(observationResults.adjustmentId, runId), eq(observationResults.kind, 'gnss_baseline')))
    // the overview kept with the run was made from its results as stored: the changed rows need it made again
    await useDb().delete(runOverviews).where(eq(runOverviews.adjustmentId, runId))
    expect((await chief.get(`${fx.base}/adjustments/${fx.runNumber}/vectors?flagged=1`)).body.total).toBe(1)
    const map = unpackMap((await chief.get(`${fx.base}/adjustments/${fx.runNumber}/overview`)).body)
    expect(map.rating[Array.from(map.lineKind).indexOf(1)]).toBe(2)
    // its three rows fail in the residual table's rating filter, though no component's w is flagged
    expect((await chief.get(`${fx.base}/adjustments/${fx.runNumber}/observations?kind=gnss_baseline&rating=fail`)).body.total).toBe(3)
  })

  it('the residual CSV carries the component and the vector test after the usual columns (the vector flagged above)', async () => {
    const res = await chief.raw(`${fx.base}/adjustments/${fx.runNumber}/export/residuals.csv`)
    expect(res.status).toBe(200)
    const rows = Papa.parse<Record<string, string>>(await res.text(), { header: true, comments: '#', skipEmptyLines: true }).data
    const v = rows.filter((x) => x.kind === 'gnss_baseline')
    expect(v.map((x) => x.component)).toEqual(['dx', 'dy', 'dz'])
    expect(v[0]).toMatchObject({ vector_statistic: '14.20', vector_critical: '16.27', vector_flagged: 'yes', vector_residual_e_mm: '2.10', vector_residual_n_mm: '-3.40', vector_residual_u_mm: '10.20' })
    expect(rows.find((x) => x.kind !== 'gnss_baseline')!.vector_statistic).toBe('')
  })

  it('sign-off, its accuracy check and the release files (CSV, LandXML, PDF) work for the run; the PDF lists the flagged vector once', async () => {
    const s = await surveyor.post(`${fx.base}/adjustments/${fx.runNumber}/signoffs`, { statement: 'Certified for the GNSS test (test).', password: 'tiepoint-demo', acknowledgeFailedTests: true })
    expect(s.status, JSON.stringify(s.body)).toBe(201)
    expect(s.body.stations.length).toBeGreaterThan(1)
    const rel = await chief.post(`${fx.base}/releases`, { signoffId: s.body.id })
    expect(rel.status, JSON.stringify(rel.body)).toBe(201)
    expect(rel.body.files.map((f: any) => f.format)).toEqual(['csv', 'landxml', 'pdf'])
    expect(s.body.accuracyCheck).toBeTruthy()
    const list = (await chief.get(`${fx.base}/releases`)).body.find((x: any) => x.id === rel.body.id)
    for (const f of list.files) {
      const res = await chief.raw(f.url)
      expect(res.status).toBe(200)
      const bytes = Buffer.from(await res.arrayBuffer())
      if (f.format === 'csv') {
        const rows = Papa.parse<Record<string, string>>(bytes.toString('utf8'), { header: true, comments: '#', skipEmptyLines: true }).data
        expect(rows.map((x) => x.name)).toEqual(s.body.stations.map((x: any) => x.name))
      }
      if (f.format === 'landxml') expect(readLandXml(bytes.toString('utf8')).ok).toBe(true)
      if (f.format === 'pdf') {
        const { text } = await extractText(await getDocumentProxy(new Uint8Array(bytes)), { mergePages: true })
        expect(text).toContain(s.body.sha256)
        // the flagged vector the signer accepted is listed once, not once per component
        expect(text.match(/gnss baseline/g) ?? []).toHaveLength(1)
      }
    }
  })

  it('excluding the vector excludes the whole vector (its one observation: all three components) and queues a run', async () => {
    const [p] = await useDb().select().from(projects).where(eq(projects.id, fx.projectId))
    const [a] = await useDb().select().from(observationResults).where(and(eq(observationResults.adjustmentId, runId), eq(observationResults.kind, 'gnss_baseline'))).limit(1)
    const [obs] = await useDb().insert(observations).values({
      firmId: p!.firmId, projectId: p!.id, setId: fx.setId, line: 900, kind: 'gnss_baseline', at: a!.at, from: null, to: a!.to, value: 56.3,
      unit: 'm', vector: { d: [31.5, -12.25, 44], sigma: [0.003, 0.003, 0.003], correlation: null },
    }).returning()
    await useDb().update(observationResults).set({ observationId: obs!.id }).where(and(eq(observationResults.adjustmentId, runId), eq(observationResults.kind, 'gnss_baseline')))
    const v = (await chief.get(`${fx.base}/adjustments/${fx.runNumber}/vectors`)).body.rows[0]
    expect(v.id).toBe(obs!.id)
    const r = await chief.post(`${fx.base}/adjustments/${fx.runNumber}/exclude`, { observationId: v.id })
    expect(r.status, JSON.stringify(r.body)).toBe(202)
    expect(r.body.number).toBe(fx.runNumber + 1)
    const [after] = await useDb().select().from(observations).where(eq(observations.id, obs!.id))
    expect(after!.excluded).toBe(true)
    // a foreign firm cannot exclude it
    expect((await other.post(`/api/firms/${DEMO.otherFirm}/projects/${fx.projectId}/adjustments/${fx.runNumber}/exclude`, { observationId: v.id })).status).toBe(404)
  })
})

describe('a real 3D run of the GNSS demo file (the combined adjustment)', () => {
  const demo = readFileSync('server/db/demo/demo-gnss.csv')
  let api: string
  let number: number
  beforeAll(async () => {
    const r = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `GNSS 3D run ${Date.now()}`, crs: 'EPSG:25833', units: 'm' })
    api = base(r.body.id)
    await chief.patch(api, { geoidSeparationM: 44.87 })
    const tol = await chief.post(`/api/firms/${DEMO.firm}/tolerance-profiles`, { kind: 'custom', name: `Loose GNSS rule ${r.body.id}`, mm: 100, ppm: 100, source: 'invented rule for tests' })
    await chief.patch(api, { toleranceProfileId: tol.body.id })
    const up = await chief.post(`${api}/observation-sets`, fileForm('demo-gnss.csv', demo))
    if (up.status !== 201) throw new Error(`upload: ${up.status} ${JSON.stringify(up.body)}`)
    const q = await chief.post(`${api}/adjustments`, {})
    if (q.status !== 202) throw new Error(`queue: ${q.status} ${JSON.stringify(q.body)}`)
    number = q.body.number
    await runDone(chief, `${api}/adjustments/${number}/status`, 120_000)
  })

  it('stores one vector row per file vector, each tested, agreeing with its three component rows', async () => {
    const v = await chief.get(`${api}/adjustments/${number}/vectors?sort=line`)
    expect(v.body.total).toBe(6) // six gnss_baseline rows in the file (counted by hand)
    expect(v.body.rows.map((x: any) => x.line)).toEqual([6, 7, 8, 9, 10, 11])
    const comps = await chief.get(`${api}/adjustments/${number}/observations?kind=gnss_baseline&sort=line&size=50`)
    expect(comps.body.total).toBe(18)
    for (const x of v.body.rows) {
      expect(x.test).not.toBeNull()
      // one α0, one distribution and one redundancy for the run: the same critical value for every vector (property)
      expect(x.test.critical).toBe(v.body.rows[0].test.critical)
      const rows = comps.body.rows.filter((o: any) => o.line === x.line)
      expect(rows.map((o: any) => o.component).sort()).toEqual(['dx', 'dy', 'dz'])
      for (const o of rows) expect(o.vectorTest).toEqual(x.test)
      expect(x.residual).toEqual(['dx', 'dy', 'dz'].map((c) => rows.find((o: any) => o.component === c).residual))
    }
    const map = unpackMap((await chief.get(`${api}/adjustments/${number}/overview`)).body)
    expect(Array.from(map.lineKind).filter((f) => f === 1)).toHaveLength(6)
  })

  it('signs off, and every release format (CSV, GeoJSON, LandXML, PDF) is made from the 3D run', async () => {
    const s = await surveyor.post(`${api}/adjustments/${number}/signoffs`, { statement: 'Certified for the GNSS demo (test).', password: 'tiepoint-demo', acknowledgeFailedTests: true })
    expect(s.status, JSON.stringify(s.body)).toBe(201)
    const names = s.body.stations.map((x: any) => x.name)
    expect(names.length).toBeGreaterThan(0)
    const rel = await chief.post(`${api}/releases`, { signoffId: s.body.id })
    expect(rel.status, JSON.stringify(rel.body)).toBe(201)
    expect(rel.body.files.map((f: any) => f.format)).toEqual(['csv', 'geojson', 'landxml', 'pdf'])
    const list = (await chief.get(`${api}/releases`)).body.find((x: any) => x.id === rel.body.id)
    for (const f of list.files) {
      const res = await chief.raw(f.url)
      expect(res.status).toBe(200)
      const bytes = Buffer.from(await res.arrayBuffer())
      if (f.format === 'geojson') {
        const gj = JSON.parse(bytes.toString('utf8'))
        expect(gj.features.map((x: any) => x.properties.name)).toEqual(names)
        // the site was invented near 14.6° E, 54.4° N (server/db/demo/generate-gnss.ts)
        for (const ft of gj.features) {
          expect(Math.abs(ft.geometry.coordinates[0] - 14.65)).toBeLessThan(0.1)
          expect(Math.abs(ft.geometry.coordinates[1] - 54.41)).toBeLessThan(0.1)
        }
      }
      if (f.format === 'csv') {
        const rows = Papa.parse<Record<string, string>>(bytes.toString('utf8'), { header: true, comments: '#', skipEmptyLines: true }).data
        expect(rows.map((x) => x.name)).toEqual(names)
      }
      if (f.format === 'landxml') expect(readLandXml(bytes.toString('utf8')).ok).toBe(true)
      if (f.format === 'pdf') {
        const { text } = await extractText(await getDocumentProxy(new Uint8Array(bytes)), { mergePages: true })
        expect(text).toContain(s.body.sha256)
      }
    }
  })

  it('excluding a vector from the real run excludes that one observation and the next run still adjusts in 3D', async () => {
    const v = (await chief.get(`${api}/adjustments/${number}/vectors?sort=line`)).body.rows.find((x: any) => x.line === 11)
    const r = await chief.post(`${api}/adjustments/${number}/exclude`, { observationId: v.id })
    expect(r.status).toBe(202)
    await runDone(chief, `${api}/adjustments/${r.body.number}/status`, 120_000)
    const next = (await chief.get(`${api}/adjustments/${r.body.number}/vectors?sort=line`)).body.rows
    const out = next.find((x: any) => x.line === 11)
    expect(out.excluded).toBe(true)
    expect(next.filter((x: any) => !x.excluded)).toHaveLength(5)
  })
})
