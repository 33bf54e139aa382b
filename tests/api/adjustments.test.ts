// Adjustment runs through the API, the queue and the worker, on the invented
// demo network (server/db/demo): queueing, results, exports, roles, firm
// isolation, exclusion with a new run, and that finished runs never change.
import { DEMO_PROJECT_HEIGHT_M } from '../../server/db/demo/generate'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { adjustedStations, adjustments, mailboxMessages, observationResults, observationSets, observations, projects, runOverviews, toleranceProfiles } from '../../server/db/schema'
import { computeOverview } from '../../server/services/run-results'
import { adjustNetwork } from '../../server/engine/index'
import { as, DEMO, type Client } from '../support/http'
import { BLUNDER, DEMO_CSV, projectWithNetwork, readCsv, waitForRun } from './adjustments-fixture'
import { unpackMap } from '../../shared/map-overview'
import { naturalCompare } from '../../shared/natural-sort'

let chief: Client
let fx: Awaited<ReturnType<typeof projectWithNetwork>>
let base: string
const runPath = (n: number) => `${base}/adjustments/${n}`

beforeAll(async () => {
  chief = await as(DEMO.chief)
  fx = await projectWithNetwork(DEMO.firm, 'Run suite', DEMO_CSV)
  base = `/api/firms/${DEMO.firm}/projects/${fx.projectId}`
})
afterAll(async () => { await closeDb() })

async function runToEnd(c: Client, body: unknown = {}) {
  const r = await c.post(`${base}/adjustments`, body)
  expect(r.status, JSON.stringify(r.body)).toBe(202)
  await waitForRun(async () => (await c.get(`${runPath(r.body.number)}/status`)).body)
  return (await c.get(runPath(r.body.number))).body
}

describe('a run on the demo network', () => {
  let run: any
  it('POST {} answers 202 with a number and queued status, and the worker finishes it', async () => {
    const r = await chief.post(`${base}/adjustments`, {})
    expect(r.status).toBe(202)
    expect(r.body).toEqual({ number: 1, status: 'queued' })
    await waitForRun(async () => (await chief.get(`${runPath(1)}/status`)).body)
    run = (await chief.get(runPath(1))).body
    expect(run.status, run.errorText).toBe('done')
    expect(run.inputHash).toMatch(/^[0-9a-f]{64}$/)
  })

  it('stores the coordinates the engine computes from the same file (1e-6 m)', async () => {
    const read = readCsv(DEMO_CSV)
    // the run passes the project's settings: the demo project lies at its project height
    const engine = adjustNetwork({ controls: read.controls, observations: read.observations, projectHeightM: DEMO_PROJECT_HEIGHT_M })
    expect(engine.ok).toBe(true)
    if (!engine.ok) return
    const [first] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, 1)))
    const mine = await useDb().select().from(adjustedStations).where(and(eq(adjustedStations.firmId, fx.firmId), eq(adjustedStations.adjustmentId, first!.id)))
    expect(mine.length).toBe(engine.result.stations.length)
    for (const s of engine.result.stations) {
      const row = mine.find((m) => m.name === s.name)!
      for (const k of ['east', 'north', 'height'] as const) {
        if (s[k] === null) expect(row[k]).toBeNull()
        else expect(Math.abs(row[k]! - s[k]!), `${s.name} ${k}`).toBeLessThan(1e-6)
      }
    }
    expect(run.result.sigma0).toBeCloseTo(engine.result.sigma0!, 9)
  })

  it('returns the CLI JSON shape inside `result` and sets the project to adjusted', async () => {
    expect(Object.keys(run.result)).toEqual(expect.arrayContaining(['converged', 'iterations', 'dof', 'sigma0', 'globalTest', 'stations', 'observations']))
    expect(Object.keys(run.result.stations[0]).sort()).toEqual(['east', 'ellipse', 'fixed', 'height', 'name', 'north', 'sdEast', 'sdHeight', 'sdNorth'].sort())
    expect(Object.keys(run.result.observations[0]).sort()).toEqual(['at', 'flagged', 'from', 'kind', 'line', 'mdb', 'redundancy', 'residual', 'to', 'w'].sort())
    const [p] = await useDb().select().from(projects).where(eq(projects.id, fx.projectId))
    expect(p!.status).toBe('adjusted')
  })

  it('flags the planted blunder (server/db/demo/blunder.json) with the largest |w|', () => {
    const ranked = [...run.observations].filter((o: any) => o.w !== null).sort((a: any, b: any) => Math.abs(b.w) - Math.abs(a.w))
    expect(ranked[0].line).toBe(BLUNDER.line)
    expect(ranked[0].flagged).toBe(true)
    expect(run.summary.globalTest.passed).toBe(false)
  })

  it('says how it was weighted: the set has no profile, so the built-in default, with a warning', async () => {
    expect(run.weighting).toHaveLength(1)
    const w = run.weighting[0]
    expect(w).toMatchObject({ setName: 'network.csv', source: 'built-in default', profile: { id: null, name: 'built-in default' } })
    // the engine's invented default (server/engine/sigma.ts DEFAULT_PROFILE): 2 mm + 2 ppm, 3″ directions
    expect(w.profile.values).toMatchObject({ distanceMm: 2, distancePpm: 2, directionArcsec: 3 })
    expect(w.observations).toBe(readCsv(DEMO_CSV).observations.length)
    expect(run.warnings.join(' ')).toContain('built-in default')
    // chance flags: n·α0 over the tested observations
    expect(run.summary.chance.expectedFlags).toBeCloseTo(run.summary.chance.tested * run.summary.alpha0, 12)
    // every observation of the demo file is tested in run 1 (none excluded); the GET holds only the first page, so count from the file
    expect(run.summary.chance.tested).toBe(readCsv(DEMO_CSV).observations.length)
  })

  it('names the instrument profile that weighted a set, already while the run is queued', async () => {
    const instruments = (await chief.get(`/api/firms/${DEMO.firm}/instruments`)).body as { id: number; name: string; distanceMm: number }[]
    const profile = instruments.find((i) => i.name === 'Example 1″ total station')!
    const other = await projectWithNetwork(DEMO.firm, 'Weighted by a profile', DEMO_CSV)
    await useDb().update(observationSets).set({ instrumentProfileId: profile.id }).where(eq(observationSets.projectId, other.projectId))
    const otherBase = `/api/firms/${DEMO.firm}/projects/${other.projectId}`
    const q = await chief.post(`${otherBase}/adjustments`, {})
    expect(q.status).toBe(202)
    const queued = (await chief.get(`${otherBase}/adjustments/${q.body.number}`)).body
    expect(queued.weighting[0]).toMatchObject({ source: 'own profile', profile: { id: profile.id, name: 'Example 1″ total station', values: { distanceMm: profile.distanceMm } } })
    expect(queued.warnings.join(' ')).not.toContain('built-in default')
    await waitForRun(async () => (await chief.get(`${otherBase}/adjustments/${q.body.number}/status`)).body)
    const done = (await chief.get(`${otherBase}/adjustments/${q.body.number}`)).body
    expect(done.weighting[0].profile.name).toBe('Example 1″ total station')
  })

  it('checks relative precision against the project tolerance: allowable = mm + ppm·d', async () => {
    // ALTA/NSPS 2021 section 3.E: 20 mm + 50 ppm at 95 % (the demo firm's profile)
    const [alta] = await useDb().select().from(toleranceProfiles).where(and(eq(toleranceProfiles.firmId, fx.firmId), eq(toleranceProfiles.kind, 'relative_ppm')))
    const r = await runToEnd(chief, { toleranceProfileId: alta!.id })
    expect(r.status, r.errorText).toBe('done')
    expect(r.summary.tolerance.id).toBe(alta!.id)
    expect(r.relative.length).toBeGreaterThan(0)
    for (const pair of r.relative) {
      expect(pair.allowable).toBeCloseTo(0.020 + 50e-6 * pair.distance, 12)
      expect(pair.passes).toBe(pair.semiMajor95 <= pair.allowable)
    }
    expect(r.summary.relative.checked).toBe(r.totals.relative)
    // without a profile nothing is rated
    expect(run.summary.tolerance).toBeNull()
    expect(run.relative.every((p: any) => p.allowable === null && p.passes === null)).toBe(true)
  })

  it('exports coordinates and residuals as CSV with the caution line', async () => {
    const c = await chief.raw(`${runPath(1)}/export/coordinates.csv`)
    const text = await c.text()
    expect(c.status).toBe(200)
    expect(c.headers.get('content-type')).toContain('text/csv')
    expect(text).toContain('licensed practice')
    const cp1 = run.stations.find((s: any) => s.name === 'CP1')
    expect(text).toContain(`CP1,control,fixed,${cp1.east.toFixed(4)},${cp1.north.toFixed(4)}`)
    // a metre project: precisions in mm, and the file says so
    expect(text).toContain('precisions (sd_*, ellipse_*) in millimetres (mm)')
    expect(text.split('\n').find((l) => l.startsWith('station,'))).toContain(',sd_east_mm,')
    const r = await chief.raw(`${runPath(1)}/export/residuals.csv`)
    const rtext = await r.text()
    expect(rtext.split('\n').filter((l) => l && !l.startsWith('#')).length).toBe(run.totals.observations + 1)
  })

  it('exclude-and-re-run excludes the blunder and the new run passes the global test', async () => {
    const obsId = fx.obsIdByLine.get(BLUNDER.line)!
    const r = await chief.post(`${runPath(1)}/exclude`, { observationId: obsId })
    expect(r.status, JSON.stringify(r.body)).toBe(202)
    expect(r.body.number).toBe(3)
    await waitForRun(async () => (await chief.get(`${runPath(3)}/status`)).body)
    const second = (await chief.get(runPath(3))).body
    expect(second.status).toBe('done')
    expect(second.summary.globalTest.passed).toBe(true)
    const excluded = (await chief.get(`${runPath(3)}/observations?excluded=1`)).body
    expect(excluded.rows.map((o: any) => o.line)).toEqual([BLUNDER.line])
    expect(second.inputHash).not.toBe(run.inputHash)
    expect(second.settings).toEqual(run.settings)
    const [o] = await useDb().select().from(observations).where(eq(observations.id, obsId))
    expect(o!.excluded).toBe(true)
  })

  it('compares two runs in SQL: σ̂0, shifts largest first, the blunder excluded and no longer flagged', async () => {
    const r = await chief.get(`${base}/adjustments/compare?a=1&b=3&size=5`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const c = r.body
    expect(c.a.sigma0).toBeCloseTo(run.summary.sigma0, 12)
    expect(c.b.globalTest.passed).toBe(true)
    const s1 = (await chief.get(`${runPath(1)}/stations?size=500`)).body.rows as any[]
    const s3 = (await chief.get(`${runPath(3)}/stations?size=500`)).body.rows as any[]
    const shifts = s3.map((s) => {
      const o = s1.find((x) => x.name === s.name)
      return { name: s.name, horiz: Math.hypot(s.east - o.east, s.north - o.north) }
    }).sort((x, y) => y.horiz - x.horiz)
    expect(c.stations.total).toBe(s3.length)
    expect(c.stations.rows.map((x: any) => x.name)).toEqual(shifts.slice(0, 5).map((x) => x.name))
    c.stations.rows.forEach((x: any, i: number) => expect(x.horiz).toBeCloseTo(shifts[i]!.horiz, 9))
    expect(c.exclusions.added.rows.map((o: any) => o.line)).toEqual([BLUNDER.line])
    expect(c.exclusions.removed.total).toBe(0)
    expect(c.flags.removed.rows.map((o: any) => o.line)).toContain(BLUNDER.line)
    expect(c.flags.added.total).toBe(0)
    // neither run holds a GNSS vector: no vector rows at all
    expect(c.vectors).toBeNull()
    expect((await chief.get(`${base}/adjustments/compare?a=1&b=999`)).status).toBe(404)
    expect((await chief.get(`${base}/adjustments/compare?a=1`)).status).toBe(422)
  })

  it('stores results only in the result tables: the run row keeps a summary without per-station or per-observation lists', async () => {
    const [row] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, 1)))
    expect(Object.keys(row!)).not.toContain('result')
    const summary = row!.summary as Record<string, unknown>
    expect(summary.stations).toBeUndefined()
    expect(summary.observations).toBeUndefined()
    expect(summary.rows).toEqual({ stations: run.totals.stations, observations: run.totals.observations, relative: run.totals.relative })
    const stored = await useDb().select().from(observationResults).where(and(eq(observationResults.firmId, fx.firmId), eq(observationResults.adjustmentId, row!.id)))
    expect(stored.length).toBe(run.totals.observations)
    // the engine's own list, in the same order, with every field the page shows
    const read = readCsv(DEMO_CSV)
    const engine = adjustNetwork({ controls: read.controls, observations: read.observations.map((o) => ({ ...o, id: fx.obsIdByLine.get(o.line) })), projectHeightM: DEMO_PROJECT_HEIGHT_M })
    if (!engine.ok) throw new Error(engine.reason)
    const all = (await chief.get(`${runPath(1)}/observations?sort=order&size=500`)).body
    expect(all.total).toBe(engine.result.observations.length)
    const key = (o: { line: number; kind: string; component: string | null }) => `${o.line}|${o.kind}|${o.component ?? ''}`
    const mine = new Map(all.rows.map((o: any) => [key(o), o]))
    for (const e of engine.result.observations) {
      const o = mine.get(key(e)) as any
      expect(o, key(e)).toBeDefined()
      expect([o.at, o.to, o.flagged, o.tauFlagged, o.weak, o.excluded, o.residualUnit, o.valueUnit]).toEqual([e.at, e.to, e.flagged, e.tauFlagged, e.weak, e.excluded, e.residualUnit, e.valueUnit])
      for (const k of ['residual', 'sigma', 'redundancy', 'w', 'tau', 'mdb', 'observed'] as const) {
        if (e[k] === null) expect(o[k], `${e.line} ${k}`).toBeNull()
        else expect(Math.abs(o[k] - e[k]!), `${e.line} ${k}`).toBeLessThan(1e-6 * Math.max(1, Math.abs(e[k]!)))
      }
    }
  })

  it('pages, sorts and filters observation results on the server', async () => {
    const all = (await chief.get(`${runPath(1)}/observations?sort=order&size=500`)).body.rows as any[]
    const byAbsW = [...all].filter((o) => o.w !== null).sort((a, b) => Math.abs(b.w) - Math.abs(a.w))
    const p1 = (await chief.get(`${runPath(1)}/observations?sort=-absW&size=3`)).body
    const p2 = (await chief.get(`${runPath(1)}/observations?sort=-absW&size=3&page=2`)).body
    expect(p1.total).toBe(all.length)
    expect([p1.page, p1.size, p2.page]).toEqual([1, 3, 2])
    expect([...p1.rows, ...p2.rows].map((o: any) => Math.abs(o.w))).toEqual(byAbsW.slice(0, 6).map((o) => Math.abs(o.w)))
    const flagged = (await chief.get(`${runPath(1)}/observations?sort=-absW&flagged=1`)).body
    const expectFlagged = all.filter((o) => !o.excluded && (o.flagged || o.tauFlagged))
    expect(flagged.total).toBe(expectFlagged.length)
    expect(flagged.rows.map((o: any) => o.line)).toContain(BLUNDER.line)
    const notFlagged = (await chief.get(`${runPath(1)}/observations?flagged=0&size=1`)).body
    expect(notFlagged.total + flagged.total).toBe(all.length)
    const byLine = (await chief.get(`${runPath(1)}/observations?sort=-line&size=5`)).body.rows.map((o: any) => o.line)
    expect(byLine).toEqual([...all].map((o) => o.line).sort((a, b) => b - a).slice(0, 5))
    const at = all[0].at
    const station = (await chief.get(`${runPath(1)}/observations?station=${encodeURIComponent(at)}&size=500`)).body
    expect(station.total).toBe(all.filter((o) => o.at === at || o.to === at || o.from === at).length)
    const kind = (await chief.get(`${runPath(1)}/observations?kind=direction&size=500`)).body
    expect(kind.rows.every((o: any) => o.kind === 'direction')).toBe(true)
    expect(kind.total).toBe(all.filter((o) => o.kind === 'direction').length)
  })

  it('pages and sorts stations and relative precisions; bounded page sizes and unknown sorts answer 422', async () => {
    const st = (await chief.get(`${runPath(1)}/stations?sort=-east&size=2`)).body
    const all = (await chief.get(`${runPath(1)}/stations?size=500`)).body
    expect(st.total).toBe(all.total)
    expect(st.rows.map((s: any) => s.name)).toEqual([...all.rows].filter((s: any) => s.east !== null).sort((a: any, b: any) => b.east - a.east).slice(0, 2).map((s: any) => s.name))
    const fixed = (await chief.get(`${runPath(1)}/stations?fixed=1&size=500`)).body
    expect(fixed.total).toBe(all.rows.filter((s: any) => s.fixed).length)
    const q = (await chief.get(`${runPath(1)}/stations?q=cp`)).body
    expect(q.rows.map((s: any) => s.name).sort()).toEqual(all.rows.filter((s: any) => s.name.toLowerCase().includes('cp')).map((s: any) => s.name).sort())
    const rel = (await chief.get(`${runPath(1)}/relative?sort=-distance&size=3`)).body
    const relAll = (await chief.get(`${runPath(1)}/relative?size=500`)).body
    expect(rel.rows.map((p: any) => p.distance)).toEqual(relAll.rows.map((p: any) => p.distance).sort((a: number, b: number) => b - a).slice(0, 3))
    for (const bad of ['size=501', 'page=0', 'sort=secret', 'flagged=yes', 'sort=-absW;drop']) {
      const r = await chief.get(`${runPath(1)}/observations?${bad}`)
      expect(r.status, bad).toBe(422)
      expect(r.body.errors[0].field, bad).toBeTruthy()
    }
    expect((await chief.get(`${runPath(1)}/stations?size=501`)).status).toBe(422)
  })

  it('the run GET is small: summary, weighting and the first page with totals', async () => {
    expect(run.stations.length).toBeLessThanOrEqual(50)
    expect(run.observations.length).toBeLessThanOrEqual(50)
    expect(run.totals.observations).toBeGreaterThan(run.observations.length - 1)
    expect(run).toHaveProperty('weighting')
    expect(run.result.observations.map((o: any) => o.line)).toEqual(run.observations.map((o: any) => o.line))
  })

  it('the overview is kept with the run when it is stored, and equals one computed afresh from the result tables', async () => {
    const [first] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, 1)))
    const [row] = await useDb().select().from(runOverviews).where(and(eq(runOverviews.firmId, first!.firmId), eq(runOverviews.adjustmentId, first!.id)))
    expect(row, 'no overview kept for run 1').toBeDefined()
    const res = await chief.raw(`${runPath(1)}/overview`)
    expect(res.headers.get('content-type')).toMatch(/^application\/json/)
    expect(await res.text()).toBe(row!.body)
    expect(JSON.parse(row!.body)).toEqual(await computeOverview(row!.firmId, row!.adjustmentId))
  })

  it('the overview gives the map every station and connected pair, and the w histogram counts every used w', async () => {
    const ov = (await chief.get(`${runPath(1)}/overview`)).body
    const all = (await chief.get(`${runPath(1)}/observations?sort=order&size=500`)).body.rows as any[]
    const stations = (await chief.get(`${runPath(1)}/stations?size=500`)).body.rows as any[]
    expect(ov.names.length).toBe(run.totals.stations)
    const map = unpackMap(ov)
    // packed coordinates come back to the millimetre
    for (const s of stations) {
      const i = map.names.indexOf(s.name)
      expect(Math.abs(map.east[i]! - s.east)).toBeLessThanOrEqual(0.0005)
      expect(Math.abs(map.north[i]! - s.north)).toBeLessThanOrEqual(0.0005)
    }
    const pairs = new Set(all.filter((o) => o.kind !== 'control' && o.at !== o.to).map((o) => [o.at, o.to].sort().join('|')))
    const drawn = Array.from(map.from, (f, k) => [map.names[f], map.names[map.to[k]!]].sort().join('|'))
    expect(new Set(drawn)).toEqual(pairs)
    expect(drawn.length).toBe(pairs.size)
    const blunder = all.find((o) => o.line === BLUNDER.line)
    const i = drawn.indexOf([blunder.at, blunder.to].sort().join('|'))
    expect(map.rating[i]).toBe(2)
    expect(ov.fail).toContain(i)
    const used = all.filter((o) => !o.excluded && o.w !== null)
    expect(ov.distributions.w.counts.reduce((a: number, b: number) => a + b, 0)).toBe(used.length)
    const beyond = used.filter((o) => o.w >= 4.5).length
    expect(ov.distributions.w.counts[19]).toBe(beyond)
  })

  it('lists runs newest first with σ̂0 and verdict', async () => {
    const r = await chief.get(`${base}/adjustments`)
    expect(r.status).toBe(200)
    expect(r.body.map((x: any) => x.number)).toEqual([3, 2, 1])
    expect(r.body[0].globalTestPassed).toBe(true)
    expect(r.body[2].globalTestPassed).toBe(false)
    expect(r.body[2].sigma0).toBeCloseTo(run.summary.sigma0, 9)
  })
})

describe('the coordinates and relative-precision tables\' default order', () => {
  it('is natural by station name (KF2 before KF10) on the run GET and the paged route; "as adjusted" stays a choice', async () => {
    // the demo network with unpadded names, so code-unit order (KF10 before KF2) and natural order differ
    const csv = DEMO_CSV.replace(/\bKF0(\d)\b/g, 'KF$1')
    const nat = await projectWithNetwork(DEMO.firm, 'Natural order', csv)
    const natBase = `/api/firms/${DEMO.firm}/projects/${nat.projectId}/adjustments`
    const started = await chief.post(natBase, {})
    expect(started.status).toBe(202)
    await waitForRun(async () => (await chief.get(`${natBase}/${started.body.number}/status`)).body)
    const natRun = (await chief.get(`${natBase}/${started.body.number}`)).body
    expect(natRun.status, natRun.errorText).toBe('done')
    const natural = ['BM1', 'CP1', 'CP2', ...Array.from({ length: 22 }, (_, i) => `KF${i + 1}`)]
    expect(natRun.stations.map((s: any) => s.name)).toEqual(natural)
    const p1 = (await chief.get(`${natBase}/${started.body.number}/stations?size=10`)).body
    expect(p1.sort).toBe('name')
    expect(p1.rows.map((s: any) => s.name)).toEqual(natural.slice(0, 10))
    const p2 = (await chief.get(`${natBase}/${started.body.number}/stations?size=10&page=2`)).body
    expect(p2.rows.map((s: any) => s.name)).toEqual(natural.slice(10, 20))
    // the other orders still answer: as adjusted is the stored order, which is not the natural one here
    const [row] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, nat.projectId), eq(adjustments.number, started.body.number)))
    const stored = (await useDb().select({ id: adjustedStations.id, name: adjustedStations.name }).from(adjustedStations)
      .where(and(eq(adjustedStations.firmId, nat.firmId), eq(adjustedStations.adjustmentId, row!.id)))).sort((x, y) => x.id - y.id).map((x) => x.name)
    const asAdjusted = (await chief.get(`${natBase}/${started.body.number}/stations?sort=order&size=50`)).body.rows.map((s: any) => s.name)
    expect(asAdjusted).toEqual(stored)
    expect(asAdjusted).not.toEqual(natural)
    const reversed = (await chief.get(`${natBase}/${started.body.number}/stations?sort=-name&size=3`)).body.rows.map((s: any) => s.name)
    expect(reversed).toEqual(['KF22', 'KF21', 'KF20'])

    // relative precisions: by default the pair's names in natural order, from then to, on the run GET and the paged route
    const relBase = `${natBase}/${started.body.number}/relative`
    const storedPairs = (await chief.get(`${relBase}?sort=order&size=500`)).body
    expect(storedPairs.total).toBeLessThanOrEqual(500)
    const pair = (p: { from: string; to: string }) => `${p.from}–${p.to}`
    // expected: ordered in JavaScript by Intl.Collator (ICU, numeric), not by the database
    const naturalPairs = [...storedPairs.rows].sort((x: any, y: any) => naturalCompare(x.from, y.from) || naturalCompare(x.to, y.to)).map(pair)
    expect(storedPairs.rows.map(pair)).not.toEqual(naturalPairs)
    const froms = naturalPairs.map((p) => p.split('–')[0])
    expect(froms.indexOf('KF2')).toBeGreaterThanOrEqual(0)
    expect(froms.indexOf('KF2')).toBeLessThan(froms.indexOf('KF11'))
    expect(naturalPairs.indexOf('CP1–KF9')).toBeGreaterThanOrEqual(0)
    expect(naturalPairs.indexOf('CP1–KF9')).toBeLessThan(naturalPairs.indexOf('CP1–KF10'))
    expect(natRun.relative.length).toBeGreaterThanOrEqual(20)
    expect(natRun.relative.map(pair)).toEqual(naturalPairs.slice(0, natRun.relative.length))
    const r1 = (await chief.get(`${relBase}?size=10`)).body
    expect(r1.sort).toBe('from')
    expect(r1.rows.map(pair)).toEqual(naturalPairs.slice(0, 10))
    const r2 = (await chief.get(`${relBase}?size=10&page=2`)).body
    expect(r2.rows.map(pair)).toEqual(naturalPairs.slice(10, 20))
    const lastFirst = (await chief.get(`${relBase}?sort=-from&size=3`)).body.rows.map(pair)
    expect(lastFirst).toEqual(naturalPairs.slice(-3).reverse())
  })
})

describe('settings and numbering', () => {
  it('422 names the field of an invalid setting', async () => {
    const r = await chief.post(`${base}/adjustments`, { confidence: 2 })
    expect(r.status).toBe(422)
    expect(r.body.errors[0].field).toBe('confidence')
    const s = await chief.post(`${base}/adjustments`, { observationSetIds: [999999] })
    expect(s.status).toBe(422)
    expect(s.body.errors[0].field).toBe('observationSetIds')
  })

  it('allocates distinct consecutive numbers to concurrent POSTs', async () => {
    const before = (await chief.get(`${base}/adjustments`)).body.length
    const rs = await Promise.all(Array.from({ length: 5 }, () => chief.post(`${base}/adjustments`, { scaling: 'a-priori' })))
    expect(rs.map((r) => r.status)).toEqual([202, 202, 202, 202, 202])
    expect(rs.map((r) => r.body.number).sort((a, b) => a - b)).toEqual([1, 2, 3, 4, 5].map((k) => before + k))
    for (const r of rs) await waitForRun(async () => (await chief.get(`${runPath(r.body.number)}/status`)).body)
  })

  it('same inputs and settings give the same input hash; different settings a different one', async () => {
    const runs = (await useDb().select().from(adjustments).where(eq(adjustments.projectId, fx.projectId)))
    const apriori = runs.filter((r) => (r.settings as any).scaling === 'a-priori')
    expect(new Set(apriori.map((r) => r.inputHash)).size).toBe(1)
    const aposteriori = runs.filter((r) => r.number === 3)
    expect(aposteriori[0]!.inputHash).not.toBe(apriori[0]!.inputHash)
  })

  it('a free network and a weighted hold run too', async () => {
    const free = await runToEnd(chief, { datum: 'free' })
    expect(free.status, free.errorText).toBe('done')
    const weighted = await runToEnd(chief, { holds: [{ station: 'CP2', hold: 'weighted', sdEastMm: 5, sdNorthMm: 5 }] })
    expect(weighted.status, weighted.errorText).toBe('done')
    expect(weighted.stations.find((s: any) => s.name === 'CP2').fixed).toBe(false)
  })
})

describe('streamed CSV exports', () => {
  it('keep a station name a spreadsheet would run as a formula as text (apostrophe in front), and negative numbers as numbers', async () => {
    // regression: the streamed export must follow the same rule as the other CSV files (OWASP "CSV Injection")
    const csv = DEMO_CSV.replaceAll('KF01', '=KF01').replaceAll('KF02', '-KF02')
    const f = await projectWithNetwork(DEMO.firm, 'Formula names', csv)
    const path = `/api/firms/${DEMO.firm}/projects/${f.projectId}/adjustments`
    const r = await chief.post(path, {})
    expect(r.status).toBe(202)
    await waitForRun(async () => (await chief.get(`${path}/${r.body.number}/status`)).body)
    const coords = await (await chief.raw(`${path}/${r.body.number}/export/coordinates.csv`)).text()
    const names = coords.split('\n').filter((l) => l && !l.startsWith('#')).slice(1).map((l) => l.split(',')[0])
    expect(names).toContain("'=KF01")
    expect(names).toContain("'-KF02")
    expect(names.some((n) => n === '=KF01' || n === '-KF02')).toBe(false)
    const residuals = await (await chief.raw(`${path}/${r.body.number}/export/residuals.csv`)).text()
    expect(residuals).toContain(",'=KF01,")
    // a negative residual stays a plain number
    expect(residuals.split('\n').some((l) => /^\d+,[a-z_]+,[^,]*,[^,]*,[^,]*,-\d/.test(l))).toBe(true)
  })
})

describe('an unsolvable network', () => {
  it('ends failed with the engine’s own message', async () => {
    const csv = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note\nhorizontal_distance,A,,B,100.000,m,,,,,,\nhorizontal_distance,B,,C,120.000,m,,,,,,\nhorizontal_distance,A,,C,150.000,m,,,,,,\n'
    const bad = await projectWithNetwork(DEMO.firm, 'Unsolvable', csv)
    const read = readCsv(csv)
    const expected = adjustNetwork({ controls: read.controls, observations: read.observations })
    expect(expected.ok).toBe(false)
    const r = await chief.post(`/api/firms/${DEMO.firm}/projects/${bad.projectId}/adjustments`, {})
    expect(r.status).toBe(202)
    const path = `/api/firms/${DEMO.firm}/projects/${bad.projectId}/adjustments/${r.body.number}`
    await waitForRun(async () => (await chief.get(`${path}/status`)).body)
    const run = (await chief.get(path)).body
    expect(run.status).toBe('failed')
    if (!expected.ok) expect(run.errorText).toBe(expected.reason)
    expect(run.result).toBeNull()
  })

  it('e-mails the person who started the failed run, with the reason', async () => {
    const subject = 'did not finish'
    let mails: { to: string; subject: string; text: string }[] = []
    for (let i = 0; i < 40 && !mails.length; i++) {
      mails = (await useDb().select().from(mailboxMessages)).filter((m) => m.subject.includes('Unsolvable') && m.subject.includes(subject))
      if (!mails.length) await new Promise((r) => setTimeout(r, 250))
    }
    expect(mails.map((m) => m.to)).toEqual([DEMO.chief])
    expect(mails[0]!.text).toContain('Reason:')
  })
})

describe('who may do what', () => {
  it('field crew may read runs but not start one (403); a client sees nothing (404)', async () => {
    const crew = await as(DEMO.crew)
    expect((await crew.get(runPath(1))).status).toBe(200)
    expect((await crew.get(`${base}/adjustments`)).status).toBe(200)
    expect((await crew.post(`${base}/adjustments`, {})).status).toBe(403)
    expect((await crew.post(`${runPath(1)}/exclude`, { observationId: 1 })).status).toBe(403)
    const client = await as(DEMO.client)
    expect((await client.post(`${base}/adjustments`, {})).status).toBe(404)
    expect((await client.get(runPath(1))).status).toBe(404)
    expect((await client.get(`${base}/adjustments`)).status).toBe(404)
    expect((await client.get(`${runPath(1)}/export/coordinates.csv`)).status).toBe(404)
  })

  it('owner and licensed surveyor may start runs', async () => {
    for (const who of [DEMO.owner, DEMO.surveyor]) {
      const c = await as(who)
      const r = await c.post(`${base}/adjustments`, {})
      expect(r.status, who).toBe(202)
      await waitForRun(async () => (await c.get(`${runPath(r.body.number)}/status`)).body)
    }
  })

  it('another firm’s run answers 404 on every route', async () => {
    const other = await as(DEMO.other)
    const otherBase = `/api/firms/${DEMO.otherFirm}/projects/${fx.projectId}`
    for (const p of [`${base}/adjustments`, runPath(1), `${runPath(1)}/status`, `${runPath(1)}/export/residuals.csv`, `${otherBase}/adjustments/1`,
      `${runPath(1)}/stations`, `${runPath(1)}/observations?sort=-absW&flagged=1`, `${runPath(1)}/relative`, `${runPath(1)}/overview`,
      `${base}/adjustments/compare?a=1&b=3`, `${otherBase}/adjustments/1/observations`]) {
      expect((await other.get(p)).status, p).toBe(404)
    }
    expect((await other.post(`${base}/adjustments`, {})).status).toBe(404)
    expect((await other.post(`${otherBase}/adjustments`, {})).status).toBe(404)
    expect((await other.post(`${runPath(1)}/exclude`, { observationId: 1 })).status).toBe(404)
  })

  it('no route changes a finished run: PATCH, PUT, DELETE answer 404 or 405 and the run is unchanged', async () => {
    const before = (await chief.get(runPath(1))).body
    for (const m of ['PATCH', 'PUT', 'DELETE']) {
      for (const p of [runPath(1), `${runPath(1)}/status`]) {
        const r = await chief.request(m, p, { status: 'queued', summary: {} })
        expect([404, 405], `${m} ${p}`).toContain(r.status)
      }
    }
    const after = (await chief.get(runPath(1))).body
    expect(after).toEqual(before)
  })

  it('a run number that does not exist, or is not a number, answers 404', async () => {
    expect((await chief.get(runPath(99999))).status).toBe(404)
    expect((await chief.get(`${base}/adjustments/abc`)).status).toBe(404)
  })
})
