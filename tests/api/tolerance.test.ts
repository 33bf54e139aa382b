// Tolerance profiles as the firm manages them: edit, retire, restore; a
// retired profile stays on the runs that used it but cannot be chosen for a
// project or a new run; and the project's precision-unit setting.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeDb } from '../../server/db/client'
import { as, DEMO, runDone, type Client } from '../support/http'
import { auditRows } from './fielddata-helpers'
import { DEMO_CSV, projectWithNetwork } from './adjustments-fixture'

let owner: Client, chief: Client, crew: Client, other: Client
const firm = `/api/firms/${DEMO.firm}`
const rule = (name: string) => ({ kind: 'custom', name, mm: 15, ppm: 25, source: 'invented rule for tests' })

beforeAll(async () => {
  ;[owner, chief, crew, other] = await Promise.all([as(DEMO.owner), as(DEMO.chief), as(DEMO.crew), as(DEMO.other)])
})
afterAll(async () => { await closeDb() })

describe('editing and retiring tolerance profiles', () => {
  it('edits the numbers and source; the rule reads the new numbers; the audit records it', async () => {
    const c = await chief.post(`${firm}/tolerance-profiles`, rule(`Edit me ${Date.now()}`))
    expect(c.status).toBe(201)
    expect(c.body.retired).toBe(false)
    const e = await owner.patch(`${firm}/tolerance-profiles/${c.body.id}`, { mm: 12, source: 'Contract 2026-17, schedule B' })
    expect(e.status).toBe(200)
    expect(e.body.params).toMatchObject({ mm: 12, ppm: 25 })
    expect(e.body.rule).toBe('relative precision at 95 % ≤ 12 mm + 25 ppm of the distance')
    expect(e.body.source).toBe('Contract 2026-17, schedule B')
    expect((await auditRows('tolerance_profile', c.body.id)).map((a) => a.action)).toEqual(['tolerance.create', 'tolerance.update'])
  })

  it('refuses bad input with 422 naming the field, and numbers that do not belong to the kind', async () => {
    const c = await chief.post(`${firm}/tolerance-profiles`, { kind: 'fgdc_95', name: `Threshold ${Date.now()}`, thresholdMm: 30, source: 'firm policy (invented)' })
    expect(c.status).toBe(201)
    const neg = await chief.patch(`${firm}/tolerance-profiles/${c.body.id}`, { thresholdMm: -1 })
    expect(neg.status).toBe(422)
    expect(neg.body.errors.map((x: { field: string }) => x.field)).toEqual(['thresholdMm'])
    const wrongKind = await chief.patch(`${firm}/tolerance-profiles/${c.body.id}`, { ppm: 10 })
    expect(wrongKind.status).toBe(422)
    expect(wrongKind.body.errors[0].field).toBe('ppm')
    const blank = await chief.patch(`${firm}/tolerance-profiles/${c.body.id}`, { source: '  ' })
    expect(blank.status).toBe(422)
    expect(blank.body.errors[0].field).toBe('source')
    // nothing half-saved
    const list = await chief.get(`${firm}/tolerance-profiles`)
    expect(list.body.find((t: { id: number }) => t.id === c.body.id).params).toEqual({ thresholdMm: 30 })
  })

  it('a duplicate name is a conflict naming the field', async () => {
    const a = await chief.post(`${firm}/tolerance-profiles`, rule(`Twin A ${Date.now()}`))
    const b = await chief.post(`${firm}/tolerance-profiles`, rule(`Twin B ${Date.now()}`))
    const r = await chief.patch(`${firm}/tolerance-profiles/${b.body.id}`, { name: a.body.name })
    expect(r.status).toBe(409)
    expect(r.body.errors[0].field).toBe('name')
  })

  it('field crew may not edit; another firm gets 404 either way', async () => {
    const c = await chief.post(`${firm}/tolerance-profiles`, rule(`Guarded ${Date.now()}`))
    expect((await crew.patch(`${firm}/tolerance-profiles/${c.body.id}`, { retired: true })).status).toBe(403)
    expect((await other.patch(`${firm}/tolerance-profiles/${c.body.id}`, { retired: true })).status).toBe(404)
    expect((await other.patch(`/api/firms/${DEMO.otherFirm}/tolerance-profiles/${c.body.id}`, { retired: true })).status).toBe(404)
    const list = await chief.get(`${firm}/tolerance-profiles`)
    expect(list.body.find((t: { id: number }) => t.id === c.body.id).retired).toBe(false)
  })

  it('a retired profile stays on its project and past run, is listed last, and cannot be chosen anew', async () => {
    const fx = await projectWithNetwork(DEMO.firm, 'Retire tolerance', DEMO_CSV)
    const base = `${firm}/projects/${fx.projectId}`
    const t = await chief.post(`${firm}/tolerance-profiles`, rule(`Old contract ${Date.now()}`))
    expect((await chief.patch(base, { toleranceProfileId: t.body.id })).status).toBe(200)
    const run = await chief.post(`${base}/adjustments`, {})
    expect(run.status).toBe(202)

    const r = await chief.patch(`${firm}/tolerance-profiles/${t.body.id}`, { retired: true })
    expect(r.status).toBe(200)
    expect(r.body.retired).toBe(true)
    const list = await chief.get(`${firm}/tolerance-profiles`)
    const mine = list.body.find((x: { id: number }) => x.id === t.body.id)
    expect(mine.projectCount).toBe(1)
    // current profiles first, retired ones after
    const firstRetired = list.body.findIndex((x: { retired: boolean }) => x.retired)
    expect(list.body.slice(firstRetired).every((x: { retired: boolean }) => x.retired)).toBe(true)

    // the run queued before the retirement still runs against it and keeps it
    // (regression: the worker re-read the inputs and failed the run as "retired")
    await runDone(chief, `${base}/adjustments/${run.body.number}/status`)
    const view = await chief.get(`${base}/adjustments/${run.body.number}`)
    expect(view.body.status).toBe('done')
    expect(view.body.settings.toleranceProfileId).toBe(t.body.id)
    expect(view.body.summary.tolerance.name).toBe(t.body.name)

    // the same run's CSV in a feet project set to hundredths: the precision columns follow the setting
    expect((await chief.patch(base, { units: 'ft', precisionUnit: 'hundredth_ft' })).status).toBe(200)
    const csv = await (await chief.raw(`${base}/adjustments/${run.body.number}/export/coordinates.csv`)).text()
    expect(csv).toContain('precisions (sd_*, ellipse_*) in hundredths of an international foot (0.01 ft)')
    const lines = csv.split('\n').filter((l) => l && !l.startsWith('#'))
    const cols = lines[0]!.split(',')
    const st = view.body.stations.find((s: { fixed: boolean; sdEast: number | null }) => !s.fixed && s.sdEast !== null)
    const row = lines.find((l) => l.startsWith(`${st.name},`))!.split(',')
    // international foot = 0.3048 m exactly, so one hundredth is 0.003048 m
    expect(Number(row[cols.indexOf('sd_east_cft')])).toBeCloseTo(st.sdEast / 0.003048, 3)
    // the project keeps it (saving other settings does not fail) ...
    expect((await chief.patch(base, { toleranceProfileId: t.body.id, description: 'still here' })).status).toBe(200)
    // ... but a new run checked against it is refused, naming the field
    const again = await chief.post(`${base}/adjustments`, {})
    expect(again.status).toBe(422)
    expect(again.body.errors[0].field).toBe('toleranceProfileId')
    expect(again.body.errors[0].message).toMatch(/retired/)
    const explicit = await chief.post(`${base}/adjustments`, { toleranceProfileId: t.body.id })
    expect(explicit.status).toBe(422)
    // another project may not take it up
    const fx2 = await projectWithNetwork(DEMO.firm, 'Retire tolerance 2', DEMO_CSV)
    const take = await chief.patch(`${firm}/projects/${fx2.projectId}`, { toleranceProfileId: t.body.id })
    expect(take.status).toBe(422)
    expect(take.body.errors[0].field).toBe('toleranceProfileId')

    // restored, it can be chosen again
    expect((await owner.patch(`${firm}/tolerance-profiles/${t.body.id}`, { retired: false })).body.retired).toBe(false)
    expect((await chief.patch(`${firm}/projects/${fx2.projectId}`, { toleranceProfileId: t.body.id })).status).toBe(200)
    expect((await auditRows('tolerance_profile', t.body.id)).map((a) => a.action)).toEqual(['tolerance.create', 'tolerance.retire', 'tolerance.restore'])
  })
})

describe('the precision-unit setting of a project', () => {
  it('a new feet project starts in hundredths, a metre project in mm; it can be changed; bad values name the field', async () => {
    const ft = await chief.post(`${firm}/projects`, { name: `Feet ${Date.now()}`, crs: 'local', units: 'ft' })
    expect(ft.status).toBe(201)
    expect(ft.body.precisionUnit).toBe('hundredth_ft')
    const m = await chief.post(`${firm}/projects`, { name: `Metres ${Date.now()}`, crs: 'local', units: 'm' })
    expect(m.body.precisionUnit).toBe('mm')
    // moving a metre project to feet takes the feet default; back to metres, mm again
    expect((await chief.patch(`${firm}/projects/${m.body.id}`, { units: 'usft' })).body.precisionUnit).toBe('hundredth_ft')
    expect((await chief.patch(`${firm}/projects/${m.body.id}`, { units: 'ft' })).body.precisionUnit).toBe('hundredth_ft')
    expect((await chief.patch(`${firm}/projects/${m.body.id}`, { units: 'm' })).body.precisionUnit).toBe('mm')
    const p = await chief.patch(`${firm}/projects/${ft.body.id}`, { precisionUnit: 'mm' })
    expect(p.status).toBe(200)
    expect(p.body.precisionUnit).toBe('mm')
    const bad = await chief.patch(`${firm}/projects/${ft.body.id}`, { precisionUnit: 'inch' })
    expect(bad.status).toBe(422)
    expect(bad.body.errors[0].field).toBe('precisionUnit')
    expect((await crew.patch(`${firm}/projects/${ft.body.id}`, { precisionUnit: 'hundredth_ft' })).status).toBe(403)
    expect((await other.patch(`${firm}/projects/${ft.body.id}`, { precisionUnit: 'hundredth_ft' })).status).toBe(404)
  })
})
