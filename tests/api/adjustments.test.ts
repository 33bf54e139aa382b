// Adjustment runs through the API, the queue and the worker, on the invented
// demo network (server/db/demo): queueing, results, exports, roles, firm
// isolation, exclusion with a new run, and that finished runs never change.
import { DEMO_PROJECT_HEIGHT_M } from '../../server/db/demo/generate'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { adjustedStations, adjustments, mailboxMessages, observations, projects, toleranceProfiles } from '../../server/db/schema'
import { adjustNetwork } from '../../server/engine/index'
import { as, DEMO, type Client } from '../support/http'
import { BLUNDER, DEMO_CSV, projectWithNetwork, readCsv, waitForRun } from './adjustments-fixture'

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
    expect(r.summary.relative.checked).toBe(r.relative.length)
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
    const r = await chief.raw(`${runPath(1)}/export/residuals.csv`)
    const rtext = await r.text()
    expect(rtext.split('\n').filter((l) => l && !l.startsWith('#')).length).toBe(run.observations.length + 1)
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
    expect(second.observations.find((o: any) => o.line === BLUNDER.line).excluded).toBe(true)
    expect(second.inputHash).not.toBe(run.inputHash)
    expect(second.settings).toEqual(run.settings)
    const [o] = await useDb().select().from(observations).where(eq(observations.id, obsId))
    expect(o!.excluded).toBe(true)
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
    for (const p of [`${base}/adjustments`, runPath(1), `${runPath(1)}/status`, `${runPath(1)}/export/residuals.csv`, `${otherBase}/adjustments/1`]) {
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
