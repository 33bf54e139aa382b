// Licensed sign-off through the API: who may sign, the licence and password
// checks, what is stored and hashed, immutability in SQL, superseded state
// when the inputs change, and the sign-off request and completion e-mails.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import { closeDb, makePool, useDb, usePool } from '../../server/db/client'
import { adjustedStations, adjustments, memberships, firms, observations, projects, signoffs, users } from '../../server/db/schema'
import { hashPassword } from '../../server/services/passwords'
import { signoffHash } from '../../server/services/signoffs'
import { buildSummary, storeResults } from '../../server/services/run-results'
import { inventResult } from '../bench/invented-result'
import type { SignedStation } from '../../server/services/signoffs'
import { as, DEMO, type Client } from '../support/http'
import { finishedRun, mailsSince } from './signoffs-fixture'

let chief: Client
let surveyor: Client
let fx: Awaited<ReturnType<typeof finishedRun>>
const started = new Date()
const statement = 'I reviewed this adjustment and certify the listed control points for construction staking.'

beforeAll(async () => {
  chief = await as(DEMO.chief)
  surveyor = await as(DEMO.surveyor)
  fx = await finishedRun(chief, 'Sign-off suite')
})
afterAll(async () => { await closeDb() })

const signPath = () => `${fx.base}/adjustments/${fx.runNumber}/signoffs`

describe('before signing', () => {
  it('the preview lists the accuracy check of every connected pair with value, allowable and verdict', async () => {
    const r = await surveyor.get(`${fx.base}/signoffs/preview?run=${fx.runNumber}`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.check.profile.source).toBe('invented rule for tests')
    expect(r.body.check.items.length).toBeGreaterThan(0)
    for (const i of r.body.check.items) {
      expect(i.type).toBe('pair')
      // 100 mm + 100 ppm, the rule the fixture created
      expect(i.allowable).toBeCloseTo(0.1 + 100e-6 * i.distance, 12)
      expect(i.passes).toBe(i.value <= i.allowable)
    }
    const news = r.body.stations.filter((s: any) => s.kind === 'new').map((s: any) => s.name).sort()
    expect(r.body.defaultStations).toEqual(news)
  })
})

describe('the preview a page at a time', () => {
  const preview = (q: string, c = surveyor) => c.get(`${fx.base}/signoffs/preview?run=${fx.runNumber}${q}`)

  it('lists one page of stations with the total, the control points whatever the page, and the whole default set of a small run', async () => {
    const all = (await preview('&size=500')).body
    const p1 = (await preview('&size=3')).body
    const p2 = (await preview('&size=3&page=2')).body
    expect(p1.stations.map((s: any) => s.name)).toEqual(all.stations.slice(0, 3).map((s: any) => s.name))
    expect(p2.stations.map((s: any) => s.name)).toEqual(all.stations.slice(3, 6).map((s: any) => s.name))
    expect(p1.stationPage).toEqual({ page: 1, size: 3, total: all.stations.length })
    // the control points are the run's control and held stations, listed on every page
    const control = all.stations.filter((s: any) => s.kind === 'control' || s.fixed).map((s: any) => s.name)
    expect(control.length).toBeGreaterThan(0)
    expect(p2.control.map((c: any) => c.name)).toEqual(control)
    // a small run: every default name, whichever page is shown
    expect(p2.defaultStations).toEqual(all.defaultStations)
    expect(p2.defaultCount).toBe(all.defaultStations.length)
    expect(all.check.itemCount).toBe(all.check.items.length)
  })

  it('422 names the field of a bad page or size; another firm gets 404', async () => {
    for (const [q, field] of [['&size=0', 'size'], ['&size=501', 'size'], ['&page=0', 'page'], ['&page=x', 'page']] as const) {
      const r = await preview(q)
      expect(r.status, q).toBe(422)
      expect(r.body.errors.map((e: any) => e.field), q).toContain(field)
    }
    expect((await preview('', await as(DEMO.other))).status).toBe(404)
    expect((await (await as(DEMO.other)).get(`/api/firms/${DEMO.otherFirm}/projects/${fx.projectId}/signoffs/preview?run=${fx.runNumber}`)).status).toBe(404)
  })

  it('a run of more than 500 stations offers no list of names: the default set is signed whole, its count shown, the check listed in part', async () => {
    // an invented 729-station result stored with the worker's own COPY path (tests/bench/invented-result.ts)
    const db = useDb()
    const [firm] = await db.select().from(firms).where(eq(firms.slug, DEMO.firm))
    const r = inventResult(729)
    const rel = r.relative.map((p) => ({ rel: p, check: { semiMajor95: p.semiMajor95, allowable: 0.02, passes: true } }))
    const summary = buildSummary(r, null, rel.map((c) => c.check.passes), 0, [])
    // its own project (with the suite's loose rule), so the suite's run stays the newest of its project
    const [project] = await db.insert(projects).values({ firmId: firm!.id, name: `Sign-off 729 stations ${Date.now()}`, crs: 'local', units: 'm', toleranceProfileId: fx.toleranceId }).returning()
    const number = 1
    await db.transaction(async (tx) => {
      const [run] = await tx.insert(adjustments).values({ firmId: firm!.id, projectId: project!.id, number, settings: { confidence: 0.95 }, inputHash: 'invented', status: 'queued' }).returning()
      await storeResults(tx, firm!.id, run!.id, r, new Map(), rel)
      await tx.update(adjustments).set({ status: 'done', finishedAt: new Date(), summary: summary as unknown as Record<string, unknown> }).where(eq(adjustments.id, run!.id))
    })
    const big = await surveyor.get(`/api/firms/${DEMO.firm}/projects/${project!.id}/signoffs/preview?run=${number}&size=50`)
    expect(big.status, JSON.stringify(big.body).slice(0, 300)).toBe(200)
    expect(big.body.stations.length).toBe(50)
    expect(big.body.stationPage.total).toBe(729)
    expect(big.body.defaultStations).toBeNull()
    // the project's loose rule (100 mm + 100 ppm) passes every invented pair: every new station is in the default set
    expect(big.body.defaultCount).toBe(r.stations.filter((s) => s.kind === 'new').length)
    expect(big.body.control.map((c: any) => c.name).sort()).toEqual(r.stations.filter((s) => s.fixed).map((s) => s.name).sort())
    expect(big.body.check.itemCount).toBe(r.relative.length)
    expect(big.body.check.items.length).toBeLessThan(r.relative.length)

    // signing it without a list of names signs that whole default set, in one record whose hash recomputes
    const signed729 = await surveyor.post(`/api/firms/${DEMO.firm}/projects/${project!.id}/adjustments/${number}/signoffs`,
      { statement: 'Signed whole: invented 729-station test run.', password: 'tiepoint-demo', acknowledgeFailedTests: true })
    expect(signed729.status, JSON.stringify(signed729.body).slice(0, 300)).toBe(201)
    const newNames = r.stations.filter((s) => s.kind === 'new').map((s) => s.name).sort()
    expect(signed729.body.stations.map((s: SignedStation) => s.name).sort()).toEqual(newNames)
    const [row] = await db.select().from(signoffs).where(eq(signoffs.id, signed729.body.id))
    expect((row!.stations as unknown as SignedStation[]).length).toBe(big.body.defaultCount)
    expect(signoffHash(row!.stations as unknown as SignedStation[], row!.inputHash)).toBe(row!.sha256)
    const listed = await surveyor.get(`/api/firms/${DEMO.firm}/projects/${project!.id}/signoffs`)
    expect(listed.body.map((x: { id: number }) => x.id)).toContain(signed729.body.id)
  })
})

describe('who may sign', () => {
  it('a party chief gets 403, field crew 403, a client 404 and another firm 404', async () => {
    const body = { statement, password: 'tiepoint-demo', acknowledgeFailedTests: true }
    expect((await chief.post(signPath(), body)).status).toBe(403)
    expect((await (await as(DEMO.crew)).post(signPath(), body)).status).toBe(403)
    expect((await (await as(DEMO.client)).post(signPath(), body)).status).toBe(404)
    expect((await (await as(DEMO.other)).post(signPath(), body)).status).toBe(404)
    expect((await (await as(DEMO.other)).post(`/api/firms/${DEMO.otherFirm}/projects/${fx.projectId}/adjustments/${fx.runNumber}/signoffs`, body)).status).toBe(404)
  })

  it('a licensed surveyor without licence number and jurisdiction gets 422 saying so', async () => {
    const db = useDb()
    const email = `unlicensed-${Date.now()}@tiepoint.test`
    const [u] = await db.insert(users).values({ email, name: 'Ada Unlicensed (invented)', passwordHash: await hashPassword('tiepoint-demo') }).returning()
    const [firm] = await db.select().from(firms).where(eq(firms.slug, DEMO.firm))
    await db.insert(memberships).values({ firmId: firm!.id, userId: u!.id, role: 'licensed_surveyor' })
    const r = await (await as(email)).post(signPath(), { statement, password: 'tiepoint-demo', acknowledgeFailedTests: true })
    expect(r.status).toBe(422)
    expect(r.body.message).toMatch(/licence number and jurisdiction/)
    expect(r.body.errors.map((e: any) => e.field)).toEqual(['licenceNumber', 'licenceJurisdiction'])
  })

  it('a wrong password answers 422 on the password field and signs nothing', async () => {
    const before = await useDb().select().from(signoffs).where(eq(signoffs.projectId, fx.projectId))
    const r = await surveyor.post(signPath(), { statement, password: 'not-my-password', acknowledgeFailedTests: true })
    expect(r.status).toBe(422)
    expect(r.body.errors[0].field).toBe('password')
    expect(await useDb().select().from(signoffs).where(eq(signoffs.projectId, fx.projectId))).toHaveLength(before.length)
  })

  it('an unknown station is named in the 422', async () => {
    const r = await surveyor.post(signPath(), { statement, password: 'tiepoint-demo', stations: ['KF01', 'NOPE9'], acknowledgeFailedTests: true })
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([{ field: 'stations.1', message: expect.stringContaining("'NOPE9' is not a station") }])
  })
})

describe('a sign-off', () => {
  let signed: any
  it('refuses a run that failed its tests unless the signer acknowledges it (422 naming the field), and writes nothing', async () => {
    // The demo network still holds its planted blunder: the global test fails and one observation is flagged.
    const before = (await useDb().select().from(signoffs)).length
    const r = await surveyor.post(signPath(), { statement, password: 'tiepoint-demo' })
    expect(r.status).toBe(422)
    expect(r.body.errors.map((e: { field: string }) => e.field)).toEqual(['acknowledgeFailedTests'])
    expect(r.body.message).toMatch(/failed its global test/)
    expect(r.body.message).toMatch(/flagged observation/)
    expect((await useDb().select().from(signoffs)).length).toBe(before)
    const preview = await surveyor.get(`/api/firms/${DEMO.firm}/projects/${fx.projectId}/signoffs/preview?run=${fx.runNumber}`)
    expect(preview.status).toBe(200)
    expect(preview.body.testWarnings).toEqual(expect.arrayContaining(['failed its global test']))
  })

  it('answers 201 with id and SHA-256 and stores the run, stations, signer, licence and statement', async () => {
    const r = await surveyor.post(signPath(), { statement, password: 'tiepoint-demo', acknowledgeFailedTests: true })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    const [ack] = await useDb().select().from(signoffs).where(eq(signoffs.id, r.body.id))
    expect((ack!.accuracyCheck as { acknowledgedFailedTests?: string[] }).acknowledgedFailedTests).toEqual(expect.arrayContaining(['failed its global test']))
    signed = r.body
    expect(signed.sha256).toMatch(/^[0-9a-f]{64}$/)
    const [row] = await useDb().select().from(signoffs).where(eq(signoffs.id, signed.id))
    expect(row).toMatchObject({ projectId: fx.projectId, signerName: 'Tomasz Reyne', licenceNumber: 'LS-DEMO-0417', statement, sha256: signed.sha256 })
    const [run] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, fx.runNumber)))
    expect(row!.adjustmentId).toBe(run!.id)
    expect(row!.inputHash).toBe(run!.inputHash)
    // the signed coordinates are the run's adjusted coordinates (rounded to 0.01 mm)
    const adjusted = await useDb().select().from(adjustedStations).where(eq(adjustedStations.adjustmentId, run!.id))
    const stored = row!.stations as unknown as SignedStation[]
    expect(stored.map((s) => s.name)).toEqual(adjusted.filter((a) => a.kind === 'new').map((a) => a.name).sort())
    for (const s of stored) {
      const a = adjusted.find((x) => x.name === s.name)!
      expect(Math.abs(s.east - a.east!)).toBeLessThanOrEqual(0.000005 + 1e-12)
      expect(Math.abs(s.north - a.north!)).toBeLessThanOrEqual(0.000005 + 1e-12)
      expect(Math.abs(s.semiMajor95! - a.semiMajor95!)).toBeLessThanOrEqual(0.000005 + 1e-12)
    }
  })

  it('its SHA-256 recomputed from the stored coordinate list and input hash matches', async () => {
    const [row] = await useDb().select().from(signoffs).where(eq(signoffs.id, signed.id))
    expect(signoffHash(row!.stations as unknown as SignedStation[], row!.inputHash)).toBe(row!.sha256)
    // and a one-hundredth-of-a-millimetre change would not
    const tampered = (row!.stations as unknown as SignedStation[]).map((s, i) => (i === 0 ? { ...s, east: s.east + 0.00001 } : s))
    expect(signoffHash(tampered, row!.inputHash)).not.toBe(row!.sha256)
  })

  it('cannot be changed or removed in SQL: the app\'s role has no right to, and the trigger refuses even the owner role', async () => {
    await expect(usePool().query('update signoffs set statement = $1 where id = $2', ['edited later', signed.id])).rejects.toThrow(/permission denied/)
    await expect(usePool().query('delete from signoffs where id = $1', [signed.id])).rejects.toThrow(/permission denied/)
    const owner = makePool(process.env.DATABASE_OWNER_URL!, 1)
    try {
      await expect(owner.query('update signoffs set statement = $1 where id = $2', ['edited later', signed.id])).rejects.toThrow(/immutable/)
      await expect(owner.query('delete from signoffs where id = $1', [signed.id])).rejects.toThrow(/immutable/)
    } finally {
      await owner.end()
    }
    const [row] = await useDb().select().from(signoffs).where(eq(signoffs.id, signed.id))
    expect(row!.statement).toBe(statement)
  })

  it('tells the owner and party chiefs by e-mail, with the hash, a link to releases and the caution', async () => {
    const mails = await mailsSince(started, 'Signed off:')
    const mine = mails.filter((m) => m.text.includes(signed.sha256))
    expect(mine.map((m) => m.to)).toEqual(expect.arrayContaining([DEMO.chief, DEMO.owner]))
    expect(mine.map((m) => m.to)).not.toContain(DEMO.client)
    expect(mine[0]!.text).toContain(`/f/${DEMO.firm}/projects/${fx.projectId}/releases`)
    expect(mine[0]!.text).toContain('Larchmere Survey Co.')
    expect(mine[0]!.html).toContain('<a href=')
    expect(mine[0]!.text.replace(/\s+/g, ' ')).toContain('must be checked against local regulations and licensed practice')
  })

  it('is listed with its hash and not superseded while the inputs are unchanged', async () => {
    const r = await chief.get(`${fx.base}/signoffs`)
    expect(r.status).toBe(200)
    expect(r.body[0]).toMatchObject({ id: signed.id, sha256: signed.sha256, superseded: false, runNumber: fx.runNumber })
    expect((await (await as(DEMO.client)).get(`${fx.base}/signoffs`)).status).toBe(404)
  })

  it('shows as superseded by newer data after an observation changes, and is left unchanged', async () => {
    const db = useDb()
    const [obs] = await db.select().from(observations).where(and(eq(observations.projectId, fx.projectId), eq(observations.kind, 'slope_distance'))).limit(1)
    await db.update(observations).set({ value: obs!.value + 0.003 }).where(eq(observations.id, obs!.id))
    const r = await chief.get(`${fx.base}/signoffs`)
    expect(r.body[0].superseded).toBe(true)
    expect(r.body[0].supersededReason).toMatch(/Superseded by newer data/)
    const [row] = await db.select().from(signoffs).where(eq(signoffs.id, signed.id))
    expect(row!.sha256).toBe(signed.sha256)
    expect(signoffHash(row!.stations as unknown as SignedStation[], row!.inputHash)).toBe(signed.sha256)
    // a superseded sign-off cannot be released
    const rel = await chief.post(`${fx.base}/releases`, { signoffId: signed.id })
    expect(rel.status).toBe(409)
    await db.update(observations).set({ value: obs!.value }).where(eq(observations.id, obs!.id))
    expect((await chief.get(`${fx.base}/signoffs`)).body[0].superseded).toBe(false)
  })
})

describe('asking for a sign-off', () => {
  it('a party chief asks and every licensed surveyor of the firm gets an e-mail with a link to the run', async () => {
    const since = new Date()
    const r = await chief.post(`${fx.base}/adjustments/${fx.runNumber}/signoff-request`, { note: 'Bridge staking starts Monday.' })
    expect(r.status, JSON.stringify(r.body)).toBe(202)
    const mails = (await mailsSince(since, 'Sign-off requested')).filter((m) => m.text.includes(`/projects/${fx.projectId}/signoff?run=${fx.runNumber}`))
    expect(mails.map((m) => m.to)).toContain(DEMO.surveyor)
    expect(mails.map((m) => m.to)).not.toContain(DEMO.chief)
    expect(mails[0]!.text).toContain('Bridge staking starts Monday.')
  })

  it('field crew may not ask (403); a client gets 404', async () => {
    expect((await (await as(DEMO.crew)).post(`${fx.base}/adjustments/${fx.runNumber}/signoff-request`, {})).status).toBe(403)
    expect((await (await as(DEMO.client)).post(`${fx.base}/adjustments/${fx.runNumber}/signoff-request`, {})).status).toBe(404)
  })
})
