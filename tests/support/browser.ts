// Headless Chromium from Debian (never a browser download), driven by playwright-core.
import { mkdirSync } from 'node:fs'
import { chromium, type Browser, type Page } from 'playwright-core'
import { baseUrl, demoPassword } from './env'

export const SCREENSHOTS = 'tests/screenshots'

export async function launch(): Promise<Browser> {
  mkdirSync(SCREENSHOTS, { recursive: true })
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  })
}

export async function newPage(browser: Browser, width = 1280, height = 860): Promise<Page> {
  const ctx = await browser.newContext({ viewport: { width, height }, baseURL: baseUrl })
  return ctx.newPage()
}

export async function signIn(page: Page, email: string, password = demoPassword) {
  await page.goto('/signin')
  await page.getByLabel('E-mail').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.waitForURL((url) => !url.pathname.startsWith('/signin'), { timeout: 20_000 })
}

export async function shot(page: Page, name: string) {
  await page.screenshot({ path: `${SCREENSHOTS}/${name}.png`, fullPage: true })
}
