// The run report with GNSS vectors, in the browser: the seeded second demo
// project (server/db/demo/demo-gnss.csv, six vectors tied to a traverse) is
// adjusted by the worker in 3D; its report lists each vector with its test and
// the map's legend names the vectors. Then a vector is typed into the grid of
// a georeferenced project.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { closeDb } from '../../server/db/client'
import { GNSS_DEMO } from '../../server/db/demo/gnss-project'
import { launch, newPage, shot, signIn } from '../support/browser'
import { as, DEMO, runDone } from '../support/http'

let browser: Browser
let page: Page
let base: string
let georeferenced: string
let demoApi: string
let chief: Awaited<ReturnType<typeof as>>

beforeAll(async () => {
  chief = await as(DEMO.chief)
  const projects = await chief.get(`/api/firms/${DEMO.firm}/projects`)
  const demo = projects.body.find((p: { name: string }) => p.name === GNSS_DEMO.name)
  if (!demo) throw new Error('the seeded GNSS demo project is missing')
  const api = `/api/firms/${DEMO.firm}/projects/${demo.id}`
  demoApi = api
  // the seed queued run 1; the worker adjusts it in 3D
  await runDone(chief, `${api}/adjustments/1/status`, 120_000)
  base = `/f/${DEMO.firm}/projects/${demo.id}/runs/1`
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
  it('lists the six vectors with their tests and residuals in E/N/U, and the map legend shows vectors', async () => {
    await page.goto(base)
    const table = page.getByTestId('vector-table')
    await table.waitFor({ timeout: 30_000 })
    const rows = table.locator('tbody tr[data-line]')
    expect(await rows.count()).toBe(6) // six gnss_baseline rows in the demo file
    const w01w02 = table.locator('tbody tr[data-line="6"]')
    const text = await w01w02.innerText()
    expect(text).toContain('W01 → W02')
    expect(text).toContain('−1755.7500') // observed ΔX as in the file
    expect(text).toMatch(/✓ passes|✕ flagged/)
    expect(await w01w02.getByRole('button', { name: /Exclude vector W01 to W02/ }).count()).toBe(1)
    const legend = page.getByTestId('legend-vectors')
    await legend.waitFor({ timeout: 30_000 })
    expect(await legend.innerText()).toContain('GNSS vector (6)')
    expect(await page.getByTestId('network-map').getAttribute('data-vectors')).toBe('6')
    // the report states the 3D model's assumptions: N of the demo project (44.87 m, seed) and no deflection of the vertical
    const model = await page.getByTestId('run-model3d').innerText()
    expect(model).toContain('N = 44.870 m')
    expect(model).toContain('Deflection of the vertical is ignored')
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

describe('GNSS vectors at phone width (390 px)', () => {
  it('the observations tab and the run report stay within the screen; a vector\'s ΔX ΔY ΔZ wrap instead of widening the table', async () => {
    const narrow = await newPage(browser, 390, 800)
    await signIn(narrow, DEMO.chief)
    const project = base.replace(/\/runs\/1$/, '')
    for (const path of [`${project}/observations`, base]) {
      await narrow.goto(path)
      await narrow.waitForLoadState('networkidle')
      // nothing, not even a table header's screen-reader text, makes the page scroll sideways
      expect(await narrow.evaluate(() => document.documentElement.scrollWidth), path).toBeLessThanOrEqual(390)
    }
    await narrow.goto(`${project}/observations`)
    const cell = narrow.locator('[data-testid="observation-table"] tbody tr', { hasText: 'ΔX −1755.7500' }).locator('td.num').filter({ hasText: 'ΔX' }).first()
    await cell.waitFor({ timeout: 30_000 })
    const dx = await cell.getByText('ΔX −1755.7500').boundingBox()
    const dz = await cell.getByText(/^ΔZ /).boundingBox()
    // the components sit on lines of their own, not side by side
    expect(dz!.y).toBeGreaterThan(dx!.y + dx!.height / 2)
    await narrow.context().close()
  })
})

describe('GNSS vectors on the compare page', () => {
  it('lists each vector\'s whole-vector test in both runs, the excluded one marked', async () => {
    // run 2 of the demo project: run 1 with the vector of line 11 excluded
    const v = (await chief.get(`${demoApi}/adjustments/1/vectors?sort=line`)).body.rows.find((x: { line: number }) => x.line === 11)
    const r = await chief.post(`${demoApi}/adjustments/1/exclude`, { observationId: v.id })
    expect(r.status).toBe(202)
    await runDone(chief, `${demoApi}/adjustments/${r.body.number}/status`, 120_000)
    await page.goto(`${base.replace(/\/runs\/1$/, '')}/compare?a=1&b=${r.body.number}`)
    const table = page.getByTestId('vector-compare-table')
    await table.waitFor({ timeout: 30_000 })
    expect(await table.locator('tbody tr[data-line]').count()).toBe(6) // six vectors in the demo file
    // its verdict changed, so it comes first
    const first = table.locator('tbody tr[data-line]').first()
    expect(await first.getAttribute('data-line')).toBe('11')
    expect(await first.innerText()).toMatch(/passes|flagged/)
    expect(await first.innerText()).toContain('excluded')
    await shot(page, 'compare-gnss-vectors')
  })
})
