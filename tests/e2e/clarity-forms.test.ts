// Practitioner forms in the browser: a party chief adds a tolerance profile on
// the Tolerances page, sets it (and hundredths of a foot) in a feet project's
// settings, starts a run that names the profile it is checked against, and
// reads precisions in hundredths on the run report and the sign-off page; a
// station is deleted on the Stations tab after a confirmation.
// Foot: international foot = 0.3048 m exactly (Federal Register 24 FR 5348, 1959),
// so a hundredth of a foot is 3.048 mm.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { projects, stations } from '../../server/db/schema'
import { launch, newPage, SCREENSHOTS, shot, signIn } from '../support/browser'
import { as, DEMO } from '../support/http'
import { DEMO_CSV, projectWithNetwork } from '../api/adjustments-fixture'

let browser: Browser
let page: Page
let base: string
let api: string
let projectId: number
const tolName = `Culvert contract ${Date.now()}`
const tolSource = 'Contract 2026-17 (invented), schedule B, clause 4.2'

beforeAll(async () => {
  const fx = await projectWithNetwork(DEMO.firm, 'Forms e2e feet', DEMO_CSV)
  projectId = fx.projectId
  // a feet project still showing mm: the setting is changed on screen below
  // a project height whose foot text (405.041667) does not convert back to the same metres: an unchanged save must keep it
  await useDb().update(projects).set({ units: 'ft', precisionUnit: 'mm', projectHeightM: 123.4567 }).where(eq(projects.id, fx.projectId))
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

/** attribute values and <option> texts on the page holding a combining circumflex (U+0302), which no font we ship places on σ */
const hatsInText = (p: Page) => p.evaluate(() => {
  const found: string[] = []
  for (const el of Array.from(document.querySelectorAll('*'))) {
    for (const a of ['title', 'aria-label', 'placeholder', 'alt']) {
      const v = el.getAttribute(a)
      if (v?.includes('\u0302')) found.push(`${el.tagName} ${a}: ${v}`)
    }
    if (el.tagName === 'OPTION' && el.textContent?.includes('\u0302')) found.push(`OPTION: ${el.textContent}`)
  }
  return found
})

/** a length in metres as hundredths of an international foot, 2 decimals */
const hundredths = (m: number) => (m / 0.003048).toFixed(2)

describe('tolerance profile from page to run', () => {
  it('adds a profile on the Tolerances page; a missing source is named beside its field', async () => {
    await page.goto(`/f/${DEMO.firm}`)
    await page.getByRole('link', { name: 'Tolerances' }).first().click()
    await page.waitForURL(/\/tolerances$/)
    await page.getByRole('button', { name: 'Add tolerance profile' }).click()
    await page.getByLabel('Name').fill(tolName)
    await page.getByLabel('Constant a').fill('8')
    await page.getByLabel('Part per million b').fill('40')
    await page.getByRole('button', { name: 'Save' }).click()
    const form = page.getByTestId('tolerance-form')
    await form.getByText('is required: say where the rule comes from').waitFor()
    await page.getByLabel('Source').fill(tolSource)
    await page.getByRole('button', { name: 'Save' }).click()
    const row = page.locator(`[data-tolerance="${tolName}"]`)
    await row.waitFor()
    expect(await row.innerText()).toContain('relative precision at 95 % ≤ 8 mm + 40 ppm of the distance')
    expect(await row.innerText()).toContain(tolSource)
    await shot(page, 'clarity-tolerances')
  })

  it('assigns it and hundredths of a foot in the project settings', async () => {
    await page.goto(base)
    await page.getByRole('button', { name: 'Edit', exact: true }).click()
    await page.getByLabel('Tolerance profile').selectOption({ label: tolName })
    await page.getByLabel('Precisions').selectOption('hundredth_ft')
    await page.getByRole('button', { name: 'Save' }).click()
    await page.getByText('Saved.').waitFor()
    expect(await page.getByTestId('project-tolerance').innerText()).toContain(tolName)
    expect(await page.getByTestId('precision-unit').innerText()).toContain('hundredths of an international foot (0.01 ft)')
    const [p] = await useDb().select().from(projects).where(eq(projects.id, projectId))
    expect(p!.precisionUnit).toBe('hundredth_ft')
    await shot(page, 'clarity-project-settings')
  })

  it('takes the project height in the project\'s foot, and an unchanged save keeps the metres it was shown from', async () => {
    // 1 ft = 0.3048 m exactly (NIST Handbook 44, Appendix C)
    const [before] = await useDb().select().from(projects).where(eq(projects.id, projectId))
    expect(before!.projectHeightM).toBe(123.4567)
    await page.getByRole('button', { name: 'Edit', exact: true }).click()
    const height = page.getByLabel(/^Project height\s+ft$/)
    expect(Math.abs(Number(await height.inputValue()) * 0.3048 - 123.4567)).toBeLessThan(1e-6)
    await page.getByRole('button', { name: 'Save' }).click()
    await page.getByText('Saved.').waitFor()
    const [same] = await useDb().select().from(projects).where(eq(projects.id, projectId))
    expect(same!.projectHeightM).toBe(123.4567)

    await page.getByRole('button', { name: 'Edit', exact: true }).click()
    await height.fill('328.084')
    // the form's unit switched to metres shows the same height in metres, and back in feet as typed
    await page.getByLabel('Units').selectOption('m')
    expect(await page.getByLabel(/^Project height\s+m$/).inputValue()).toBe('100.0000032')
    await page.getByLabel('Units').selectOption('ft')
    expect(await height.inputValue()).toBe('328.084')
    await page.getByRole('button', { name: 'Save' }).click()
    await page.getByText('Saved.').waitFor()
    const [typed] = await useDb().select().from(projects).where(eq(projects.id, projectId))
    expect(typed!.projectHeightM).toBe(100.0000032)
    expect(await page.getByTestId('project-height').innerText()).toMatch(/100\.0000032 m \(328\.084 ft\)/)
  })

  it('the new-run form names the project profile; the finished run names it too and shows hundredths', async () => {
    await page.goto(`${base}/runs`)
    const select = page.locator('#run-tolerance')
    await select.waitFor()
    expect(await select.locator('option:checked').innerText()).toBe(`Checked against ${tolName} (project setting)`)
    expect(await page.getByTestId('run-tolerance-note').innerText()).toContain(`Source: ${tolSource}`)
    expect(await page.locator('#run-scaling option:checked').innerText()).toBe('Estimated σ0, a posteriori (default)')
    expect(await hatsInText(page)).toEqual([])
    // station holds: σ typed in hundredths of a foot, sent in mm (the run settings' unit): 1.25 × 3.048 = 3.81 mm
    const holds = page.getByTestId('station-holds')
    expect(await holds.locator('thead').innerText()).toContain('0.01 ft')
    await page.getByLabel('How CP2 is held').selectOption('weighted')
    await page.getByLabel('σE of CP2 in 0.01 ft').fill('1.25')
    await page.getByLabel('σN of CP2 in 0.01 ft').fill('39.37')
    let sent: unknown = null
    await page.route(`**${api}/adjustments`, (route) => {
      sent = route.request().postDataJSON()
      return route.fulfill({ status: 422, contentType: 'application/json', body: JSON.stringify({ statusCode: 422, message: 'held back by the test' }) })
    }, { times: 1 })
    await page.getByRole('button', { name: 'Start run' }).click()
    await expect.poll(() => sent).not.toBeNull()
    expect(sent).toMatchObject({ holds: [{ station: 'CP2', hold: 'weighted', sdEastMm: 3.81, sdNorthMm: 119.99976 }] })
    await page.getByLabel('σE of CP2 in 0.01 ft').fill('4000')
    await page.getByRole('button', { name: 'Start run' }).click()
    await holds.getByText('σE must be at most 3 280.84 0.01 ft').waitFor()
    await page.getByLabel('How CP2 is held').selectOption('stored')
    await page.locator('section[aria-labelledby="new-run-heading"]').screenshot({ path: `${SCREENSHOTS}/clarity-new-run-form.png` })
    await page.getByRole('button', { name: 'Start run' }).click()
    await page.waitForURL(/\/runs\/\d+$/)
    const number = page.url().split('/').pop()
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
    expect(await page.locator('main').innerText()).toContain(`Against ${tolName}`)
    expect(await hatsInText(page)).toEqual([])
    // the map and the summary speak the project's foot too: a scale bar of round hundredths read as feet,
    // a grid step in feet, the project height also in feet
    const scaleText = await page.getByTestId('ellipse-scale').innerText({ timeout: 30_000 })
    expect(scaleText).toMatch(/the black bar = [\d.]+ ft of ellipse/)
    expect(await page.getByText(/Local plane grid every/).innerText()).toMatch(/grid every [\d,]+ ft$/)
    expect(await page.getByTestId('run-plane-reduction').innerText()).toMatch(/project height [\d.]+ m \([\d.]+ ft\)/)

    const table = page.locator('[data-testid="station-table"]')
    expect(await table.locator('thead').innerText()).toContain('0.01 ft')
    const run = await (await page.request.get(`${api}/adjustments/${number}`)).json()
    const st = run.stations.find((s: { sdEast: number | null; fixed: boolean }) => !s.fixed && s.sdEast !== null)
    const cell = (await table.locator(`#station-${st.name} td`).nth(5).innerText()).trim()
    expect(cell.split(' / ')[0]).toBe(hundredths(st.sdEast))
    // residuals, σ and MDB of lengths follow the same setting (the residual table's first row that is a length)
    const residuals = page.getByTestId('residual-table')
    const lengthRow = residuals.locator('tbody tr[data-line]').filter({ hasText: /distance|height difference/i }).first()
    const cells = await lengthRow.locator('td').allInnerTexts()
    expect(cells.join(' ')).toContain('0.01 ft')
    expect(cells.join(' ')).not.toMatch(/\bmm\b/)
    await table.screenshot({ path: `${SCREENSHOTS}/clarity-run-station-table.png` })
    await shot(page, 'clarity-run-hundredths')
  })

  it('the sign-off page shows the same hundredths and says so', async () => {
    await page.goto(`${base}/signoff`)
    const units = page.getByTestId('signoff-units')
    await units.waitFor({ timeout: 30_000 })
    expect(await units.innerText()).toContain('in 0.01 ft')
    const run = await (await page.request.get(`${api}/adjustments`)).json()
    const full = await (await page.request.get(`${api}/adjustments/${run[0].number}`)).json()
    const st = full.stations.find((s: { sdEast: number | null; fixed: boolean }) => !s.fixed && s.sdEast !== null)
    const row = page.locator('[data-testid="signoff-stations"] tbody tr', { hasText: st.name }).first()
    expect((await row.locator('td').nth(6).innerText()).trim()).toBe(hundredths(st.sdEast))
    const narrow = await newPage(browser, 390, 800)
    await signIn(narrow, DEMO.chief)
    await narrow.goto(`${base}/signoff`)
    await narrow.getByTestId('signoff-units').waitFor({ timeout: 30_000 })
    await shot(narrow, 'clarity-signoff-390')
    // at 390 px the Stations tab keeps Edit and Delete of every row inside the table's frame
    // (not cut off by it), here with a control point far from the origin (wide coordinates)
    expect((await (await as(DEMO.chief)).post(`${api}/stations`, { name: 'FAR1', controlEast: 4475336.636, controlNorth: 16029206.532 })).status).toBe(201)
    await narrow.goto(`${base}/stations`)
    const frame = await narrow.getByTestId('station-table').locator('xpath=..').boundingBox()
    for (const name of ['Edit FAR1', 'Delete FAR1', 'Delete CP1']) {
      const button = narrow.getByRole('button', { name })
      await button.waitFor()
      const box = await button.boundingBox()
      expect(box!.x + box!.width, name).toBeLessThanOrEqual(Math.min(390, frame!.x + frame!.width))
    }
    await narrow.goto(`/f/${DEMO.firm}/tolerances`)
    await narrow.locator(`[data-tolerance="${tolName}"]`).waitFor()
    await shot(narrow, 'clarity-tolerances-390')
    await narrow.goto(`${base}/runs`)
    await narrow.locator('#run-tolerance').waitFor()
    await shot(narrow, 'clarity-runs-390')
    await narrow.context().close()
  })
})

describe('σ of control in the project\'s precision unit on the Stations tab', () => {
  // The project is now in feet with hundredths of a foot (set on screen above). Typed σ are
  // hundredths of an international foot; the API stores metres. Expected metres are
  // hand-computed products with 0.01 ft = 0.003048 m: 1.25 → 0.00381, 0.7 → 0.0021336,
  // 39.37 → 0.11999976 (the last one a naive 39.37 × 0.003048 in floating point misses).
  it('adds a control point with σ typed in hundredths; the API holds metres, the table shows hundredths', async () => {
    await page.goto(`${base}/stations`)
    await page.getByRole('button', { name: 'Add station' }).click()
    const form = page.getByTestId('station-form')
    await form.waitFor()
    expect(await form.locator('label[for="st-se"]').innerText()).toContain('0.01 ft')
    expect(await form.locator('legend').first().innerText()).toContain('σ at 1σ in 0.01 ft')
    await page.locator('#st-name').fill('CP9')
    await page.locator('#st-kind').selectOption('control')
    await page.locator('#st-ce').fill('5000')
    await page.locator('#st-cn').fill('6000')
    await page.locator('#st-ch').fill('100')
    await page.locator('#st-se').fill('1.25')
    await page.locator('#st-sn').fill('0.7')
    await page.locator('#st-sh').fill('39.37')
    await form.getByRole('button', { name: 'Add station' }).click()
    const row = page.locator('[data-station="CP9"]')
    await row.waitFor()

    const list = await (await page.request.get(`${api}/stations`)).json() as { name: string; controlEast: number; sdEast: number; sdNorth: number; sdHeight: number }[]
    const kf = list.find((x) => x.name === 'CP9')!
    expect(kf.controlEast).toBe(1524) // 5000 ft × 0.3048
    expect(kf.sdEast).toBe(0.00381)
    expect(kf.sdNorth).toBe(0.0021336)
    expect(kf.sdHeight).toBe(0.11999976)

    const head = await page.getByTestId('station-table').locator('thead').innerText()
    expect(head).toMatch(/σE σN σH\s+0\.01 ft/)
    expect(head).not.toMatch(/\bmm\b/)
    expect((await row.locator('td').nth(5).innerText()).trim()).toBe('1.25 0.70 39.37')

    // editing shows the same hundredths back, and saving unchanged keeps the metres
    await page.getByRole('button', { name: 'Edit CP9' }).click()
    expect(await page.locator('#st-se').inputValue()).toBe('1.25')
    expect(await page.locator('#st-sh').inputValue()).toBe('39.37')
    await page.locator('#st-sn').fill('abc')
    await page.getByTestId('station-form').getByRole('button', { name: 'Save station' }).click()
    await page.getByText("σ north: 'abc' is not a number of 0.01 ft").waitFor()
    await page.locator('#st-sn').fill('0.7')
    await page.getByTestId('station-form').getByRole('button', { name: 'Save station' }).click()
    await page.getByTestId('station-form').waitFor({ state: 'detached' })
    const again = (await (await page.request.get(`${api}/stations`)).json() as typeof list).find((x) => x.name === 'CP9')!
    expect([again.sdEast, again.sdNorth, again.sdHeight]).toEqual([0.00381, 0.0021336, 0.11999976])
    await shot(page, 'clarity-stations-hundredths')
  })
})

describe('deleting a station on screen', () => {
  it('asks first, saying what depends on it, then deletes it', async () => {
    const [firmRow] = await useDb().select({ firmId: projects.firmId }).from(projects).where(eq(projects.id, projectId))
    await useDb().insert(stations).values({ firmId: firmRow!.firmId, projectId, name: 'SPARE9', kind: 'control', controlEast: 1000, controlNorth: 2000 })
    await page.goto(`${base}/stations`)
    const row = page.locator('[data-station="SPARE9"]')
    await row.waitFor()
    // a station observations use is refused before any question
    await page.getByRole('button', { name: 'Delete CP1' }).click()
    await page.getByText(/CP1 cannot be deleted: \d+ observations use it/).waitFor()

    let asked = ''
    page.once('dialog', async (d) => { asked = d.message(); await d.dismiss() })
    await page.getByRole('button', { name: 'Delete SPARE9' }).click()
    await expect.poll(() => asked).toContain('Delete station SPARE9?')
    expect(asked).toContain('control coordinates')
    expect(await row.count()).toBe(1)

    page.once('dialog', (d) => d.accept())
    await page.getByRole('button', { name: 'Delete SPARE9' }).click()
    await page.getByText('Station SPARE9 was deleted.').waitFor()
    await expect.poll(() => row.count()).toBe(0)
    const left = await useDb().select().from(stations).where(eq(stations.name, 'SPARE9'))
    expect(left.filter((s) => s.projectId === projectId)).toEqual([])
    await shot(page, 'clarity-stations')
  })
})
