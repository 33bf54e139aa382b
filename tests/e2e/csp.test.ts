// Browser: the pages still work under the Content-Security-Policy — no CSP
// violation in the console on the main pages, Nuxt's inline script runs (the
// app hydrates and navigates), the map draws the network and the residual
// histogram draws on its canvas.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Locator, Page } from 'playwright-core'
import { closeDb } from '../../server/db/client'
import { launch, newPage, shot, signIn } from '../support/browser'
import { DEMO } from '../support/http'
import { DEMO_CSV, projectWithNetwork } from '../api/adjustments-fixture'

let browser: Browser
let page: Page
let base: string
const violations: string[] = []

/** pixels with any opacity on a canvas: zero while nothing has been drawn */
const paintedPixels = (canvas: Locator) => canvas.evaluate((c: HTMLCanvasElement) => {
  const ctx = c.getContext('2d')
  if (!ctx || !c.width || !c.height) return 0
  const px = ctx.getImageData(0, 0, c.width, c.height).data
  let painted = 0
  for (let i = 3; i < px.length; i += 4) if (px[i]! > 0) painted++
  return painted
})

beforeAll(async () => {
  const fx = await projectWithNetwork(DEMO.firm, 'CSP e2e', DEMO_CSV)
  base = `/f/${DEMO.firm}/projects/${fx.projectId}`
  browser = await launch()
  page = await newPage(browser)
  page.on('console', (m) => { if (/Content.Security.Policy|Refused to (execute|load|apply|connect|frame)/i.test(m.text())) violations.push(m.text()) })
  page.on('pageerror', (e) => { if (/Content.Security.Policy/i.test(e.message)) violations.push(e.message) })
  await signIn(page, DEMO.chief)
})
afterAll(async () => {
  await browser?.close()
  await closeDb()
})

describe('pages under the Content-Security-Policy', () => {
  it('a run page hydrates, draws the map and the residual histogram, with no CSP violation', async () => {
    await page.goto(`${base}/runs`)
    // a click that only works once the app's scripts run
    await page.getByRole('button', { name: 'Start run' }).click()
    await page.waitForURL(/\/runs\/1$/)
    await page.getByTestId('verdict').waitFor({ timeout: 60_000 })
    const map = page.getByTestId('network-map')
    // the network is drawn on Leaflet's canvas renderer; under a CSP that blocked
    // the app's scripts it would stay empty
    const mapCanvas = map.locator('canvas').first()
    await mapCanvas.waitFor({ timeout: 20_000 })
    await expect.poll(() => paintedPixels(mapCanvas), { timeout: 20_000 }).toBeGreaterThan(100)
    // the histogram canvas has something drawn on it (not all transparent)
    const canvas = page.locator('canvas:not([data-testid="network-map"] canvas)').first()
    await canvas.waitFor({ timeout: 20_000 })
    await expect.poll(() => paintedPixels(canvas), { timeout: 10_000 }).toBeGreaterThan(100)
    await shot(page, 'csp-run-page')
    expect(violations).toEqual([])
  })

  it('the other main pages load without a CSP violation', async () => {
    for (const path of [`/f/${DEMO.firm}`, `/f/${DEMO.firm}/members`, `/f/${DEMO.firm}/mailbox`, '/profile', `${base}/observations`, `${base}/stations`]) {
      const res = await page.goto(path)
      expect(res?.status(), path).toBe(200)
      await page.waitForLoadState('networkidle')
    }
    expect(violations).toEqual([])
  })

  it('the profile page lists the person\'s own sign-ins under Your activity', async () => {
    await page.goto('/profile')
    const table = page.getByTestId('activity-table')
    await table.waitFor()
    expect(await table.innerText()).toContain('Signed in')
  })

  it('the browser itself refuses an injected inline script', async () => {
    const ran = await page.evaluate(() => new Promise<boolean>((resolve) => {
      const w = window as unknown as { __injected?: boolean }
      const s = document.createElement('script')
      s.textContent = 'window.__injected = true'
      document.body.appendChild(s)
      setTimeout(() => resolve(!!w.__injected), 200)
    }))
    expect(ran).toBe(false)
    expect(violations.length).toBeGreaterThan(0)
    violations.length = 0
  })
})
