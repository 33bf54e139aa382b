// Browser: every role signs in and sees the navigation its role allows; a
// party chief creates a project; pages hold up at phone width.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, newPage, shot, signIn } from '../support/browser'
import { DEMO } from '../support/http'

let browser: Browser
beforeAll(async () => { browser = await launch() })
afterAll(async () => { await browser?.close() })

const railOf = async (page: import('playwright-core').Page) =>
  (await page.locator('aside nav a').allInnerTexts()).map((s) => s.trim())

describe('signing in as each role', () => {
  const cases: [string, string, string[]][] = [
    [DEMO.owner, 'Owner', ['Projects', 'Members', 'Instruments', 'Tolerances', 'Audit', 'Mailbox', 'Profile']],
    // Everyone has a development mailbox of their own (the test app runs without SMTP_URL, on loopback).
    [DEMO.chief, 'Party chief', ['Projects', 'Members', 'Instruments', 'Tolerances', 'Mailbox', 'Profile']],
    [DEMO.crew, 'Field crew', ['Projects', 'Members', 'Instruments', 'Tolerances', 'Mailbox', 'Profile']],
    [DEMO.surveyor, 'Licensed surveyor', ['Projects', 'Members', 'Instruments', 'Tolerances', 'Audit', 'Mailbox', 'Profile']],
    [DEMO.client, 'Client', ['Projects', 'Mailbox', 'Profile']],
  ]
  for (const [email, roleLabel, rail] of cases) {
    it(`${roleLabel} sees the right navigation`, async () => {
      const page = await newPage(browser)
      await signIn(page, email)
      await page.waitForURL(/\/f\/larchmere/)
      await expect.poll(() => page.getByTestId('signed-in-role').innerText()).toBe(roleLabel)
      expect(await railOf(page)).toEqual(rail)
      await expect.poll(() => page.getByText('Harrow Creek bridge control').count()).toBeGreaterThan(0)
      await shot(page, `foundation-home-${roleLabel.toLowerCase().replace(/ /g, '-')}`)
      await page.context().close()
    })
  }

  it('a wrong password is refused without saying whether the e-mail exists', async () => {
    const page = await newPage(browser)
    await page.goto('/signin')
    await page.getByLabel('E-mail').fill('nobody@tiepoint.test')
    await page.getByLabel('Password').fill('wrong-password')
    await page.getByRole('button', { name: 'Sign in' }).click()
    await expect.poll(() => page.getByRole('alert').innerText()).toMatch(/do not match an account/)
    await page.context().close()
  })
})

describe('projects in the browser', () => {
  it('a party chief creates a project with a projected coordinate system', async () => {
    const page = await newPage(browser)
    await signIn(page, DEMO.chief)
    await page.goto('/f/larchmere/projects/new')
    await page.getByLabel('Name').fill('Orchard Street levelling')
    await page.getByTestId('crs-projected').check()
    await page.getByLabel('Search coordinate systems').fill('UTM zone 18N')
    await page.getByLabel('Coordinate system', { exact: true }).selectOption({ label: 'EPSG:32618 — WGS 84 / UTM zone 18N' })
    await page.getByLabel('Units').selectOption('usft')
    await shot(page, 'foundation-new-project')
    await page.getByRole('button', { name: 'Create project' }).click()
    await page.waitForURL(/\/projects\/\d+$/)
    await expect.poll(() => page.locator('h1').first().innerText()).toBe('Orchard Street levelling')
    expect(await page.getByText('WGS 84 / UTM zone 18N').count()).toBeGreaterThan(0)
    await shot(page, 'foundation-project-overview')
    await page.context().close()
  })

  it('the firm home works at phone width', async () => {
    const page = await newPage(browser, 390, 844)
    await signIn(page, DEMO.chief)
    await page.waitForURL(/\/f\/larchmere/)
    await expect.poll(() => page.getByTestId('projects-table').isVisible()).toBe(true)
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth)
    expect(overflow).toBeLessThanOrEqual(0)
    await shot(page, 'foundation-home-phone')
    await page.context().close()
  })
})
