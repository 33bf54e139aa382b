// Browser: a newcomer's first start. The seed queued a run of the invented demo
// network and the worker computed it, so the party chief finds a finished run
// that names how it was weighted (the demo file has no instrument profile:
// the built-in default, with a warning) and points at the planted blunder.
import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { closeDb } from '../../server/db/client'
import { launch, newPage, shot, signIn } from '../support/browser'
import { as, DEMO, runDone } from '../support/http'

const BLUNDER = JSON.parse(readFileSync('server/db/demo/blunder.json', 'utf8')) as { line: number }
let browser: Browser
let base: string

beforeAll(async () => {
  browser = await launch()
  const chief = await as(DEMO.chief)
  const list = await chief.get(`/api/firms/${DEMO.firm}/projects`)
  const demo = list.body.find((p: { name: string }) => p.name === 'Harrow Creek bridge control')
  base = `/f/${DEMO.firm}/projects/${demo.id}`
  // the worker computes the seeded run; wait for it rather than assuming it is done
  await runDone(chief, `/api/firms/${DEMO.firm}/projects/${demo.id}/adjustments/1/status`)
})
afterAll(async () => { await browser?.close(); await closeDb() })

describe('first start', () => {
  it('the chief finds a finished demo run that names its weighting and the planted blunder', async () => {
    const page = await newPage(browser)
    await signIn(page, DEMO.chief)
    await page.goto(base)
    expect(await page.getByTestId('next-step').innerText()).not.toMatch(/upload the field files/i)
    await page.goto(`${base}/runs`)
    await page.locator('[data-run="1"]').waitFor()
    await page.locator('[data-run="1"] a').first().click()
    const report = page.locator('[data-report-run="1"]')
    await report.getByTestId('verdict').waitFor({ timeout: 30_000 })
    expect(await report.getByTestId('verdict').innerText()).toContain('does not fit')
    // weighting: the demo set, the built-in default, and the warning that says so
    expect(await report.locator('[data-set="demo-network.csv"]').getByTestId('weighting-profile').innerText()).toBe('built-in default')
    expect(await report.getByTestId('weighting-default').innerText()).toContain('invented values')
    expect(await report.getByTestId('run-warnings').innerText()).toContain('built-in default')
    // the chance line and the ranked blunder
    expect(await report.getByTestId('chance-flags').innerText()).toMatch(/Chance alone flags fewer than one \(0\.\d\d\) of \d+ tested observations at α0 = 0\.001/)
    const first = page.locator('[data-testid="residual-table"] tbody tr').first()
    expect(await first.getAttribute('data-line')).toBe(String(BLUNDER.line))
    expect(await report.getByTestId('caution').innerText()).toContain('local regulations and licensed practice')
    await page.screenshot({ path: 'tests/screenshots/first-start-run-1280.png' })
    await page.context().close()
  })

  it('the report top reads at 390 px', async () => {
    const page = await newPage(browser, 390, 844)
    await signIn(page, DEMO.chief)
    await page.goto(`${base}/runs/1`)
    await page.locator('[data-report-run="1"] [data-testid="verdict"]').waitFor({ timeout: 30_000 })
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
    expect(overflow).toBeLessThanOrEqual(0)
    await page.screenshot({ path: 'tests/screenshots/first-start-run-390.png' })
    await shot(page, 'first-start-run-390-full')
    await page.context().close()
  })
})
