// A party chief holds one control station weighted (σ in mm) in the new-run
// form: a σ of 0 is refused beside its field, an API error lands beside the
// field it names, the POST carries the hold as the run-settings schema
// expects, and the run completes. The project is in gon, so the residual
// table shows angles in cc (1 gon = 3240″ = 10 000 cc: the gon is 1/400 of a
// full turn, ISO 80000-3).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { projects } from '../../server/db/schema'
import { launch, newPage, shot, signIn } from '../support/browser'
import { DEMO } from '../support/http'
import { DEMO_CSV, projectWithNetwork } from '../api/adjustments-fixture'

let browser: Browser
let page: Page
let base: string
let api: string

beforeAll(async () => {
  const fx = await projectWithNetwork(DEMO.firm, 'Weighted hold e2e', DEMO_CSV)
  await useDb().update(projects).set({ angleFormat: 'gon' }).where(eq(projects.id, fx.projectId))
  base = `/f/${DEMO.firm}/projects/${fx.projectId}`
  api = `/api/firms/${DEMO.firm}/projects/${fx.projectId}`
  browser = await launch()
  page = await newPage(browser)
  await signIn(page, DEMO.chief)
})
afterAll(async () => {
  await browser?.close()
  await closeDb()
})

describe('station holds in the new-run form', () => {
  it('lists the control stations, each held as stored by default', async () => {
    await page.goto(`${base}/runs`)
    const holds = page.getByTestId('station-holds')
    await holds.waitFor()
    // the demo file has three control stations: CP1, CP2 (plane) and BM1 (height)
    expect(await holds.locator('tbody tr').count()).toBe(3)
    for (const name of ['CP1', 'CP2', 'BM1']) {
      expect(await page.getByLabel(`How ${name} is held`).inputValue()).toBe('stored')
    }
  })

  it('refuses a σ of 0 beside its field, without sending anything', async () => {
    let posted = 0
    page.on('request', (r) => { if (r.method() === 'POST' && r.url().endsWith('/adjustments')) posted++ })
    await page.getByLabel('How CP2 is held').selectOption('weighted')
    // CP2 has plane control only: σE and σN are offered, σH is not
    expect(await page.getByLabel('σH of CP2 in mm').count()).toBe(0)
    await page.getByLabel('σE of CP2 in mm').fill('0')
    await page.getByLabel('σN of CP2 in mm').fill('4')
    await page.getByRole('button', { name: 'Start run' }).click()
    const row = page.locator('[data-station="CP2"]')
    await row.getByText('σE must be a number of mm greater than 0').waitFor()
    expect(await page.getByLabel('σE of CP2 in mm').getAttribute('aria-invalid')).toBe('true')
    expect(posted).toBe(0)
  })

  it('clears a σ error once its row is corrected or set back to as stored, not only at the next Start run', async () => {
    const row = page.locator('[data-station="CP2"]')
    const message = row.getByText('σE must be a number of mm greater than 0')
    const summary = page.getByText('Some station σ values are not valid')
    await summary.waitFor()
    // still wrong: the message stays
    await page.getByLabel('σE of CP2 in mm').fill('-1')
    expect(await message.count()).toBe(1)
    expect(await summary.count()).toBe(1)
    // corrected: the field's message and the summary go
    await page.getByLabel('σE of CP2 in mm').fill('4')
    await message.waitFor({ state: 'detached' })
    await summary.waitFor({ state: 'detached' })
    expect(await page.getByLabel('σE of CP2 in mm').getAttribute('aria-invalid')).not.toBe('true')

    // wrong again, then the row set back to "as stored": no σ applies, so no message
    await page.getByLabel('σE of CP2 in mm').fill('0')
    await page.getByRole('button', { name: 'Start run' }).click()
    await message.waitFor()
    await page.getByLabel('How CP2 is held').selectOption('stored')
    await summary.waitFor({ state: 'detached' })
    expect(await message.count()).toBe(0)
    expect(await page.getByRole('alert').count()).toBe(0)
    await page.getByLabel('How CP2 is held').selectOption('weighted')
  })

  it('places an API validation error (errors[].field) beside the station field it names', async () => {
    await page.route(`**${api}/adjustments`, (route) => route.fulfill({
      status: 422, contentType: 'application/json',
      body: JSON.stringify({ statusCode: 422, message: 'Some fields are not valid', errors: [{ field: 'holds.0.sdNorthMm', message: 'holds.0.sdNorthMm: Too big: expected number to be <=10000' }] }),
    }), { times: 1 })
    await page.getByLabel('σE of CP2 in mm').fill('5')
    await page.getByRole('button', { name: 'Start run' }).click()
    const row = page.locator('[data-station="CP2"]')
    await row.getByText('Too big: expected number to be <=10000').waitFor()
    expect(await page.getByLabel('σN of CP2 in mm').getAttribute('aria-invalid')).toBe('true')
    expect(await page.getByLabel('σE of CP2 in mm').getAttribute('aria-invalid')).not.toBe('true')
    await shot(page, 'run-settings-1-form')
  })

  it('starts the run with CP2 weighted; the run page shows it done, angles in cc', async () => {
    await page.getByLabel('σN of CP2 in mm').fill('5')
    const [request] = await Promise.all([
      page.waitForRequest((r) => r.method() === 'POST' && r.url().endsWith(`${api}/adjustments`)),
      page.getByRole('button', { name: 'Start run' }).click(),
    ])
    expect(request.postDataJSON()).toMatchObject({ datum: 'as-stored', holds: [{ station: 'CP2', hold: 'weighted', sdEastMm: 5, sdNorthMm: 5 }] })
    await page.waitForURL(/\/runs\/\d+$/)
    const number = page.url().split('/').pop()

    // poll the run's status until the worker has finished it
    const until = Date.now() + 90_000
    let status = ''
    while (Date.now() < until) {
      status = (await (await page.request.get(`${api}/adjustments/${number}/status`)).json()).status
      if (status === 'done' || status === 'failed') break
      await page.waitForTimeout(500)
    }
    expect(status).toBe('done')
    await page.reload()
    await page.getByTestId('verdict').waitFor({ timeout: 30_000 })
    expect(await page.locator('[data-status]').first().getAttribute('data-status')).toBe('done')

    const run = await (await page.request.get(`${api}/adjustments/${number}`)).json()
    expect(run.settings.holds).toEqual([{ station: 'CP2', hold: 'weighted', sdEastMm: 5, sdNorthMm: 5 }])
    // CP2 now enters as weighted coordinate observations
    const controlRows = await (await page.request.get(`${api}/adjustments/${number}/observations?kind=control`)).json()
    expect(controlRows.rows.some((o: { kind: string; at: string }) => o.kind === 'control' && o.at === 'CP2')).toBe(true)

    // an angular residual in the table is the API's arcseconds converted to cc
    const angular = run.observations.find((o: { residualUnit: string; residual: number | null; excluded: boolean; line: number }) => o.residualUnit === 'arcsec' && o.residual !== null && !o.excluded)
    const row = page.locator(`[data-testid="residual-table"] tbody tr[data-line="${angular.line}"]`).first()
    const cells = row.locator('td')
    const residualCell = (await cells.nth(4).innerText()).replace(/\s+/g, ' ').trim()
    expect(residualCell).toBe(`${(angular.residual * 10_000 / 3240).toFixed(1)} cc`)
    expect(await page.locator('[data-testid="residual-table"]').innerText()).not.toContain('″')
    await shot(page, 'run-settings-2-run')
  })
})

describe('the new-run form at phone width', () => {
  it('keeps every station hold reachable at 390 px', async () => {
    const small = await newPage(browser, 390, 800)
    await signIn(small, DEMO.chief)
    await small.goto(`${base}/runs`)
    await small.getByTestId('station-holds').waitFor()
    const select = small.getByLabel('How CP2 is held')
    await select.scrollIntoViewIfNeeded()
    expect(await select.isVisible()).toBe(true)
    await select.selectOption('weighted')
    await small.getByLabel('σN of CP2 in mm').scrollIntoViewIfNeeded()
    expect(await small.getByLabel('σN of CP2 in mm').isVisible()).toBe(true)
    await shot(small, 'run-settings-3-phone')
    // the page itself does not scroll sideways: the holds table scrolls in its own box
    expect(await small.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390)
    await small.context().close()
  })
})

describe('crew members on the Instruments page', () => {
  it('a party chief puts a field crew member into a new crew; a refused save shows its error', async () => {
    const crewName = `Culvert crew ${Date.now().toString(36)}`
    await page.goto(`/f/${DEMO.firm}/instruments`)
    await page.getByLabel('New crew name').fill(crewName)
    await page.getByRole('button', { name: 'Add crew' }).click()
    const item = page.locator(`[data-crew="${crewName}"]`)
    await item.getByText('no members yet').waitFor()
    await item.getByRole('button', { name: 'Members' }).click()
    // by default only people with the field crew role are offered
    const editor = item.locator('form')
    expect(await editor.getByText('Party chief').count()).toBe(0)
    await editor.getByLabel(/Ilse Brandvold/).check()

    await page.route(`**/api/firms/${DEMO.firm}/crews/*`, (route) => route.fulfill({
      status: 422, contentType: 'application/json',
      body: JSON.stringify({ statusCode: 422, message: 'Some fields are not valid', errors: [{ field: 'memberIds', message: 'memberIds: 99 are not members of this firm' }] }),
    }), { times: 1 })
    await editor.getByRole('button', { name: 'Save 1 member' }).click()
    expect(await editor.getByRole('alert').innerText()).toContain('are not members of this firm')
    await shot(page, 'run-settings-4-crew-editor')

    const [saved] = await Promise.all([
      page.waitForResponse((r) => r.request().method() === 'PATCH' && /\/crews\/\d+$/.test(r.url())),
      editor.getByRole('button', { name: 'Save 1 member' }).click(),
    ])
    expect(saved.status()).toBe(200)
    expect(saved.request().postDataJSON()).toEqual({ memberIds: [expect.any(Number)] })
    await editor.waitFor({ state: 'detached' })
    // the crew's summary line (not the closed editor) now names the member
    expect(await item.locator('> div').first().innerText()).toContain('Ilse Brandvold')
    const crews = await (await page.request.get(`/api/firms/${DEMO.firm}/crews`)).json() as { name: string; members: { email: string }[] }[]
    expect(crews.find((c) => c.name === crewName)?.members.map((m) => m.email)).toEqual([DEMO.crew])
    await shot(page, 'run-settings-5-crews')
  })
})
