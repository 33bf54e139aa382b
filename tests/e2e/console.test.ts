// Browser: every page as every role, with zero console errors (hydration
// mismatches, failed requests, uncaught exceptions). Each page is loaded
// fresh, so it is server-rendered and hydrated like a first visit.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { closeDb } from '../../server/db/client'
import { launch, newPage, signIn } from '../support/browser'
import { as, DEMO, runDone } from '../support/http'

let browser: Browser
let project: string
let projectId: number

beforeAll(async () => {
  browser = await launch()
  const chief = await as(DEMO.chief)
  const list = await chief.get(`/api/firms/${DEMO.firm}/projects`)
  projectId = list.body.find((p: { name: string }) => p.name === 'Harrow Creek bridge control').id
  project = `/f/${DEMO.firm}/projects/${projectId}`
  await runDone(chief, `/api/firms/${DEMO.firm}/projects/${projectId}/adjustments/1/status`)
})
afterAll(async () => { await browser?.close(); await closeDb() })

function watchConsole(page: Page): string[] {
  const errors: string[] = []
  // errors, and the hydration warnings that name the mismatching node
  page.on('console', (m) => { if (m.type() === 'error' || (m.type() === 'warning' && /hydration/i.test(m.text()))) errors.push(`${page.url()}: ${m.text()}`) })
  page.on('pageerror', (e) => errors.push(`${page.url()}: uncaught ${e.message}`))
  return errors
}

const firm = `/f/${DEMO.firm}`
const projectTabs = () => [project, `${project}/stations`, `${project}/observations`, `${project}/runs`, `${project}/runs/1`, `${project}/compare`, `${project}/signoff`, `${project}/releases`]
const cases: [string, string, () => string[]][] = [
  ['owner', DEMO.owner, () => [firm, `${firm}/format`, `${firm}/members`, `${firm}/instruments`, `${firm}/tolerances`, `${firm}/audit`, `${firm}/mailbox`, `${firm}/projects/new`, '/profile', ...projectTabs()]],
  ['party chief', DEMO.chief, () => [firm, `${firm}/format`, `${firm}/members`, `${firm}/instruments`, `${firm}/tolerances`, `${firm}/projects/new`, '/profile', ...projectTabs()]],
  ['field crew', DEMO.crew, () => [firm, `${firm}/format`, `${firm}/members`, `${firm}/instruments`, `${firm}/tolerances`, '/profile', ...projectTabs()]],
  ['licensed surveyor', DEMO.surveyor, () => [firm, `${firm}/format`, `${firm}/members`, `${firm}/instruments`, `${firm}/tolerances`, `${firm}/audit`, '/profile', ...projectTabs()]],
  ['client', DEMO.client, () => ['/client', firm, '/profile', `${project}/releases`]],
]

describe('no console errors on any page', () => {
  it('signed out: sign-in, forgotten password, and an invitation and a reset link that are not valid', async () => {
    const page = await newPage(browser)
    const errors = watchConsole(page)
    for (const path of ['/signin', '/forgot', '/invite/not-a-real-token', '/reset/not-a-real-token']) {
      await page.goto(path)
      await page.waitForLoadState('networkidle')
    }
    expect(errors).toEqual([])
    await page.context().close()
  })

  for (const [role, email, pages] of cases) {
    it(`${role}: every page of the role`, async () => {
      const page = await newPage(browser)
      await signIn(page, email)
      const errors = watchConsole(page)
      for (const path of pages()) {
        await page.goto(path)
        await page.waitForLoadState('networkidle')
        expect(new URL(page.url()).pathname, `${role} was sent away from ${path}`).toBe(path)
      }
      expect(errors).toEqual([])
      await page.context().close()
    })
  }
})
