// Field data in the browser: the party chief has entered the control; a
// field-crew member drops the demo measurements onto the Observations tab and
// sees the count (a crew may not set control, so the crew's file has none); a file with two bad lines shows both
// line numbers; a party chief excludes an observation and edits a control point.
import { readFileSync } from 'node:fs'
import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { launch, newPage, shot, signIn } from '../support/browser'
import { as, DEMO } from '../support/http'

const DEMO_CSV = readFileSync('server/db/demo/demo-network.csv', 'utf8')
const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'
const dataRows = DEMO_CSV.split('\n').map((l) => l.trim()).filter((l) => l && !l.startsWith('#')).slice(1)
const expectedObservations = dataRows.filter((r) => !r.startsWith('control,')).length
const CONTROL_CSV = [HEADER, ...dataRows.filter((r) => r.startsWith('control,'))].join('\n') + '\n'
const MEASUREMENTS_CSV = DEMO_CSV.split('\n').filter((l) => !l.startsWith('control,')).join('\n')

let browser: Browser
let projectId: number

/** Drops a file onto the drop zone the way a browser does: a DataTransfer carried by dragenter, dragover and drop. */
async function dropFile(page: Page, name: string, text: string) {
  await page.evaluate(({ name, text }) => {
    const zone = document.querySelector('[data-testid="upload-drop"]')!
    const dt = new DataTransfer()
    dt.items.add(new File([text], name, { type: 'text/csv' }))
    for (const type of ['dragenter', 'dragover', 'drop']) {
      zone.dispatchEvent(new DragEvent(type, { bubbles: true, cancelable: true, dataTransfer: dt }))
    }
  }, { name, text })
}

beforeAll(async () => {
  const chief = await as(DEMO.chief)
  const p = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `Browser field data ${Date.now()}`, crs: 'local', units: 'm' })
  projectId = p.body.id
  const crews = await chief.get(`/api/firms/${DEMO.firm}/crews`)
  const north = crews.body.find((c: { name: string }) => c.name === 'North crew')
  await chief.post(`/api/firms/${DEMO.firm}/projects/${projectId}/crews`, { crewId: north.id })
  const form = new FormData()
  form.append('file', new Blob([CONTROL_CSV]), 'control.csv')
  const c = await chief.post(`/api/firms/${DEMO.firm}/projects/${projectId}/observation-sets`, form)
  if (c.status !== 201) throw new Error(`control upload: ${c.status} ${JSON.stringify(c.body)}`)
  browser = await launch()
})
afterAll(async () => { await browser?.close() })

describe('field data in the browser', () => {
  it('field crew drops the demo measurements and sees the count; a bad file lists both bad lines', async () => {
    const page = await newPage(browser)
    await signIn(page, DEMO.crew)
    await page.goto(`/f/${DEMO.firm}/projects/${projectId}/observations`)
    await page.getByText('Drop a Tiepoint CSV or LandXML 1.2 file here').waitFor()
    await dropFile(page, 'demo-network.csv', MEASUREMENTS_CSV)
    const result = page.getByTestId('upload-result')
    await result.waitFor({ timeout: 30_000 })
    expect(await result.textContent()).toContain(`${expectedObservations} observations`)
    await page.getByTestId('observation-table').getByText('slope distance').first().waitFor()
    await shot(page, 'fielddata-uploaded')

    const bad = [HEADER, 'horizontal_distance,A,,B,10.5,m,2,,,,,', 'horizontal_distance,A,,B,ten,m,2,,,,,', 'zenith,A,,B,91 00 00,dms,3,,,,,', 'zenith,A,,,91 00 00,dms,3,,,,,'].join('\n')
    await dropFile(page, 'two-bad-lines.csv', bad)
    const errors = page.getByTestId('upload-errors')
    await errors.waitFor({ timeout: 30_000 })
    const lines = await errors.locator('tbody tr td:first-child').allTextContents()
    expect(lines.map((l) => l.trim())).toEqual(['3', '5'])
    expect(await errors.textContent()).toContain('2 bad lines')
    await shot(page, 'fielddata-bad-lines')

    await page.setViewportSize({ width: 390, height: 844 })
    await shot(page, 'fielddata-phone')
  })

  it('party chief excludes an observation and edits a control point', async () => {
    const page = await newPage(browser)
    await signIn(page, DEMO.chief)
    await page.goto(`/f/${DEMO.firm}/projects/${projectId}/observations`)
    const table = page.getByTestId('observation-table')
    const firstRow = table.locator('tbody tr[data-line]').first()
    await firstRow.waitFor()
    const line = await firstRow.getAttribute('data-line')
    await firstRow.getByRole('button', { name: `Exclude line ${line}` }).click()
    await table.locator(`tbody tr[data-line="${line}"]`).getByText('excluded').waitFor()
    await shot(page, 'fielddata-excluded')

    await page.goto(`/f/${DEMO.firm}/projects/${projectId}/stations`)
    await page.getByRole('button', { name: 'Edit CP1' }).click()
    const east = page.getByLabel('East').first()
    await east.fill('1163.4612')
    await page.getByRole('button', { name: 'Save station' }).click()
    await page.locator('tr[data-station="CP1"]').getByText('1163.4612').waitFor()
    await shot(page, 'fielddata-control-edited')
    // the change is in the API too, in metres
    const chief = await as(DEMO.chief)
    const st = await chief.get(`/api/firms/${DEMO.firm}/projects/${projectId}/stations`)
    expect(st.body.find((s: { name: string }) => s.name === 'CP1').controlEast).toBeCloseTo(1163.4612, 6)
  })
})
