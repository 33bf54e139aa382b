// A party chief adjusts the invented demo network in the browser, finds the
// planted blunder at the top of the residual table, excludes it with one
// click, sees the new run pass, the map with ellipses, and the comparison.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { closeDb } from '../../server/db/client'
import { launch, newPage, shot, signIn } from '../support/browser'
import { DEMO } from '../support/http'
import { BLUNDER, DEMO_CSV, projectWithNetwork } from '../api/adjustments-fixture'

let browser: Browser
let page: Page
let base: string
let projectId: number

beforeAll(async () => {
  const fx = await projectWithNetwork(DEMO.firm, 'Harrow Creek e2e', DEMO_CSV)
  projectId = fx.projectId
  base = `/f/${DEMO.firm}/projects/${fx.projectId}`
  browser = await launch()
  page = await newPage(browser)
  await signIn(page, DEMO.chief)
})
afterAll(async () => {
  await browser?.close()
  await closeDb()
})

describe('runs in the browser', () => {
  it('starts the demo adjustment and shows the blunder at the top of the residual table', async () => {
    await page.goto(`${base}/runs`)
    await page.getByRole('button', { name: 'Start run' }).click()
    await page.waitForURL(/\/runs\/1$/)
    await page.locator('[data-report-run="1"] [data-testid="verdict"]').waitFor({ timeout: 60_000 })
    const verdict = await page.getByTestId('verdict').innerText()
    expect(verdict).toContain('does not fit')
    const first = page.locator('[data-testid="residual-table"] tbody tr').first()
    expect(await first.getAttribute('data-line')).toBe(String(BLUNDER.line))
    expect(await first.getAttribute('data-rating')).toBe('fail')
    await page.screenshot({ path: 'tests/screenshots/runs-1-top.png' })
    await shot(page, 'runs-1-blunder')
  })

  it('excludes the blunder with one click; the new run passes the global test', async () => {
    const first = page.locator('[data-testid="residual-table"] tbody tr').first()
    await first.getByRole('button', { name: /Exclude line/ }).click()
    await page.waitForURL(/\/runs\/2$/)
    // run 2's own report: the URL changes before run 1's page has left the screen
    const verdict = page.locator('[data-report-run="2"] [data-testid="verdict"]')
    await verdict.waitFor({ timeout: 60_000 })
    expect(await verdict.innerText()).toContain('global test passed')
    expect(await page.locator('[data-report-run="1"]').count()).toBe(0)
    // excluded observations have no w, so they sort last: the table shows them on request
    await page.getByTestId('residual-show').selectOption('excluded')
    const row = page.locator(`[data-testid="residual-table"] tbody tr[data-line="${BLUNDER.line}"]`).first()
    await row.waitFor()
    expect(await row.getAttribute('data-rating')).toBe('excluded')
    expect(await page.locator('[data-testid="residual-table"] tbody tr[data-line]').count()).toBe(1)
  })

  it('draws the network with exaggerated ellipses on the map', async () => {
    const map = page.getByTestId('network-map')
    // one canvas (Leaflet's canvas renderer), not one SVG path per line or station
    await map.locator('canvas').first().waitFor({ timeout: 20_000 })
    expect(await map.locator('svg path').count()).toBe(0)
    const run = await (await page.request.get(`/api/firms/${DEMO.firm}/projects/${projectId}/adjustments/2`)).json()
    expect(Number(await map.getAttribute('data-stations'))).toBe(run.totals.stations)
    expect(Number(await map.getAttribute('data-lines'))).toBeGreaterThan(10)
    // a small network: every name and every ellipse of a new station is drawn
    expect(Number(await map.getAttribute('data-labels'))).toBe(run.totals.stations)
    expect(Number(await map.getAttribute('data-ellipses'))).toBeGreaterThan(0)
    expect(await page.getByTestId('ellipse-scale').innerText()).toMatch(/exaggerated ×[\d,]+/)
    await map.scrollIntoViewIfNeeded()
    await map.screenshot({ path: 'tests/screenshots/runs-2-map.png' })
    await shot(page, 'runs-2-report')
    // clicking a station on the map highlights its row in the coordinates table
    const [x, y] = (await map.getAttribute('data-last-station-point'))!.split(',').map(Number)
    await map.click({ position: { x: x!, y: y! } })
    await page.locator('[data-testid="station-table"] tr.outline').first().waitFor({ timeout: 5_000 })
    expect(await page.locator('[data-testid="station-table"] tr.outline').count()).toBe(1)
  })

  it('compares the two runs: the shifts and the excluded observation', async () => {
    await page.goto(`${base}/compare?a=1&b=2`)
    await page.getByTestId('shift-table').waitFor()
    const rows = await page.locator('[data-testid="shift-table"] tbody tr').count()
    expect(rows).toBeGreaterThan(5)
    expect(await page.getByText(`excluded in run 2: line ${BLUNDER.line}`).count()).toBe(1)
    expect(await page.getByTestId('sigma0-change').innerText()).toMatch(/→/)
    await shot(page, 'runs-3-compare')
  })

  it('the runs list works at 390 px', async () => {
    const small = await newPage(browser, 390, 800)
    await signIn(small, DEMO.chief)
    await small.goto(`${base}/runs`)
    await small.locator('[data-run="2"]').waitFor()
    expect(await small.locator('[data-run]').count()).toBe(2)
    await shot(small, 'runs-4-list-390')
    await small.context().close()
  })

  it('the run report at 390 px: every result table fits its card, and "Show every column" brings the rest back', async () => {
    const small = await newPage(browser, 390, 800)
    await signIn(small, DEMO.chief)
    await small.goto(`${base}/runs/2`)
    const residuals = small.getByTestId('residual-table')
    await residuals.locator('tbody tr').first().waitFor()
    // a table wider than its scroll box would hide columns behind a sideways scroll
    const overflow = (id: string) => small.getByTestId(id).evaluate((t) => t.scrollWidth - t.parentElement!.clientWidth)
    for (const id of ['residual-table', 'station-table', 'relative-table']) expect(await overflow(id), id).toBeLessThanOrEqual(0)
    const mdb = residuals.getByRole('columnheader', { name: 'MDB' })
    expect(await mdb.isVisible()).toBe(false)
    await residuals.locator('xpath=ancestor::div[contains(@class, "table-frame")]').getByRole('button', { name: 'Show every column' }).click()
    await expect.poll(() => mdb.isVisible()).toBe(true)
    await shot(small, 'runs-5-report-390')
    await small.context().close()
  })
})
