// The run report with GNSS vectors, in the browser: the vectors section lists
// each vector with its test and the map's legend names the vectors. Until the
// 3D adjustment is on main, a real run of the demo network gets one vector's
// three result rows written into its tables the way the worker's COPY writes
// them (values invented; χ²(3) critical 16.27 at α0 = 0.001 from the
// NIST/SEMATECH e-Handbook §1.3.6.7.4).
import { and, eq } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { closeDb, useDb } from '../../server/db/client'
import { adjustments, observationResults, observations } from '../../server/db/schema'
import { launch, newPage, shot, signIn } from '../support/browser'
import { as, DEMO, runDone } from '../support/http'
import { DEMO_CSV, projectWithNetwork } from '../api/adjustments-fixture'

let browser: Browser
let page: Page
let base: string
let georeferenced: string

beforeAll(async () => {
  const fx = await projectWithNetwork(DEMO.firm, 'GNSS report e2e', DEMO_CSV)
  const chief = await as(DEMO.chief)
  const api = `/api/firms/${DEMO.firm}/projects/${fx.projectId}`
  const q = await chief.post(`${api}/adjustments`, {})
  if (q.status !== 202) throw new Error(`queue: ${q.status} ${JSON.stringify(q.body)}`)
  await runDone(chief, `${api}/adjustments/${q.body.number}/status`, 90_000)
  const [run] = await useDb().select().from(adjustments).where(and(eq(adjustments.projectId, fx.projectId), eq(adjustments.number, q.body.number)))
  // the vector's own observation row, so the report can offer to exclude it
  const [obs] = await useDb().insert(observations).values({
    firmId: fx.firmId, projectId: fx.projectId, setId: fx.setId, line: 900, kind: 'gnss_baseline', at: 'CP1', from: null, to: 'CP2', value: 1774.0,
    unit: 'm', vector: { d: [1168.528, 1333.454, -2.1], sigma: [0.003, 0.003, 0.003], correlation: null },
  }).returning()
  const row = (component: 'dx' | 'dy' | 'dz', observed: number, residual: number) => ({
    firmId: run!.firmId, adjustmentId: run!.id, observationId: obs!.id, line: 900, kind: 'gnss_baseline' as const, component, at: 'CP1', from: null, to: 'CP2',
    observed, adjusted: observed + residual, valueUnit: 'm', residual, sigma: 0.003, residualUnit: 'm', redundancy: 0.6, w: residual / 0.003,
    vectorStatistic: 21.7, vectorCritical: 16.27, vectorDistribution: 'chi2', vectorFlagged: true, residualE: 0.0151, residualN: -0.0042, residualU: 0.0203,
  })
  await useDb().insert(observationResults).values([row('dx', 1168.528, 0.009), row('dy', 1333.454, -0.004), row('dz', -2.1, 0.018)])
  base = `/f/${DEMO.firm}/projects/${fx.projectId}/runs/${q.body.number}`
  const g = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `GNSS grid e2e ${Date.now()}`, crs: 'EPSG:32633', units: 'm' })
  georeferenced = `/f/${DEMO.firm}/projects/${g.body.id}`
  browser = await launch()
  page = await newPage(browser)
  await signIn(page, DEMO.chief)
})
afterAll(async () => {
  await browser?.close()
  await closeDb()
})

describe('GNSS vectors in the run report', () => {
  it('lists the vector with its test and residual in E/N/U, and the map legend shows vectors', async () => {
    await page.goto(base)
    const table = page.getByTestId('vector-table')
    await table.waitFor({ timeout: 30_000 })
    const rows = table.locator('tbody tr[data-line]')
    expect(await rows.count()).toBe(1)
    const text = await rows.first().innerText()
    expect(text).toContain('CP1 → CP2')
    expect(text).toContain('21.70')
    expect(text).toContain('16.27')
    expect(text).toContain('✕ flagged')
    expect(text).toContain('15.1') // residual east, mm
    expect(await rows.first().getByRole('button', { name: /Exclude vector CP1 to CP2/ }).count()).toBe(1)
    const legend = page.getByTestId('legend-vectors')
    await legend.waitFor({ timeout: 30_000 })
    expect(await legend.innerText()).toContain('GNSS vector (1)')
    expect(await page.getByTestId('network-map').getAttribute('data-vectors')).toBe('1')
    await shot(page, 'run-gnss-vectors')
  })

  it('the typed-in grid takes a vector in three-number fields and stores it', async () => {
    await page.goto(`${georeferenced}/observations`)
    await page.getByRole('button', { name: 'Open grid' }).click()
    await page.getByLabel('Row 1 kind').selectOption('gnss_baseline')
    await page.getByLabel('Row 1 Instrument at', { exact: true }).fill('W01')
    await page.getByLabel('Row 1 Target', { exact: true }).fill('W02')
    const fields: [string, string][] = [['ΔX m', '-1755.7500'], ['ΔY m', '1963.3372'], ['ΔZ m', '884.3970'], ['σX mm', '3.96'], ['σY mm', '2.63'], ['σZ mm', '5.09'], ['ρXY', '0.2367'], ['ρXZ', '0.6756'], ['ρYZ', '0.2659']]
    for (const [label, value] of fields) await page.getByLabel(`Row 1 ${label}`, { exact: true }).fill(value)
    await page.getByRole('button', { name: 'Save typed-in observations' }).click()
    await page.getByText('1 observation saved as a typed-in set.').waitFor({ timeout: 20_000 })
    const cell = page.locator('[data-testid="observation-table"] tbody tr').first()
    await cell.getByText('ΔX −1755.7500').waitFor({ timeout: 20_000 })
    expect(await cell.innerText()).toContain('ρXY 0.237')
  })
})
