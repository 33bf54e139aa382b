// Benchmark: big invented networks through the API, the queue and the run page.
// For each size (stations; default 1,000 and 2,000, or TIEPOINT_BENCH_STATIONS,
// e.g. "1000,2000,10000"): upload the observation file (CSV, multipart, the
// real route), POST a run, wait for `done`, then fetch the run report's first
// page (the run GET), the map/histogram overview, a filtered page of residuals
// and the residuals CSV. Prints each time and size, the engine and storage
// times the worker recorded, and the app process's peak RSS. Then, for the
// smallest size (or TIEPOINT_BENCH_PAGE_STATIONS), the run page in headless
// Chromium: time to network idle and the table rows in the DOM. Last, a
// 10,000-station run with invented results (TIEPOINT_BENCH_INVENTED_STATIONS)
// stored with the worker's COPY path and its run page timed the same way.
// Figures only, no pass/fail. Run with `bash docker-free-scripts/bench-api.sh`
// (starts DB, app and worker). The 10,000-station figure needs the sparse
// factorization: with the dense one the engine alone takes many minutes there.
import { performance } from 'node:perf_hooks'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { adjustments, firms, users } from '../../server/db/schema'
import { buildSummary, storeResults } from '../../server/services/run-results'
import { inventResult } from './invented-result'
import { networkCsv } from './network-csv'
import { launch, newPage, signIn } from '../support/browser'
import { as, DEMO, type Client } from '../support/http'
import { setup, teardown } from '../support/server-setup'

const SIZES = (process.env.TIEPOINT_BENCH_STATIONS ?? '1000,2000').split(',').map((s) => Number(s.trim())).filter((n) => n > 0)
const PAGE_SIZE_STATIONS = Number(process.env.TIEPOINT_BENCH_PAGE_STATIONS ?? Math.min(...SIZES))
const kib = (n: number) => `${(n / 1024).toFixed(0)} KiB`
async function timed(c: Client, path: string) {
  const t0 = performance.now()
  const res = await c.raw(path)
  const text = await res.text()
  return { ms: performance.now() - t0, bytes: Buffer.byteLength(text), status: res.status, text }
}

async function oneSize(chief: Client, stations: number): Promise<{ projectId: number; number: number } | null> {
  const net = networkCsv(stations)
  const created = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `Bench ${net.stations} ${Date.now()}`, crs: 'local', units: 'm' })
  if (created.status !== 201 && created.status !== 200) throw new Error(`project: ${created.status} ${JSON.stringify(created.body)}`)
  const fx = { projectId: Number(created.body.id) }
  const project = `/api/firms/${DEMO.firm}/projects/${fx.projectId}`
  const form = new FormData()
  form.append('file', new Blob([net.csv]), `bench-${net.stations}.csv`)
  const t0 = performance.now()
  const up = await chief.post(`${project}/observation-sets`, form)
  const tUpload = performance.now() - t0
  if (up.status !== 201 && up.status !== 200) {
    console.log(`${net.stations} stations: upload answered ${up.status}: ${JSON.stringify(up.body).slice(0, 300)}`)
    return null
  }
  const t1 = performance.now()
  const post = await chief.post(`${project}/adjustments`, { observationSetIds: [up.body.id] })
  if (post.status !== 202) throw new Error(`POST answered ${post.status}: ${JSON.stringify(post.body)}`)
  let status = post.body.status
  while (status === 'queued' || status === 'running') {
    await new Promise((r) => setTimeout(r, 200))
    status = (await chief.get(`${project}/adjustments/${post.body.number}/status`)).body.status
  }
  const tDone = performance.now() - t1
  const run = `${project}/adjustments/${post.body.number}`
  const first = await timed(chief, run)
  const body = JSON.parse(first.text)
  const overview = await timed(chief, `${run}/overview`)
  const flagged = await timed(chief, `${run}/observations?sort=-absW&flagged=0&page=2`)
  const csv = await timed(chief, `${run}/export/residuals.csv`)
  const s = body.summary ?? {}
  console.log(`\n${net.stations.toLocaleString('en')} stations, ${net.observations.toLocaleString('en')} observations (invented), file ${kib(net.csv.length)}`)
  console.log(`  upload (parse + COPY ${up.body.observations} rows): ${tUpload.toFixed(0)} ms`)
  console.log(`  run ${post.body.number}: ${status}${body.errorText ? ` (${body.errorText})` : ''}; POST → done ${tDone.toFixed(0)} ms; engine ${s.engineMs ?? '?'} ms; storing results (COPY) ${s.storeMs ?? '?'} ms; σ̂0 ${s.sigma0?.toFixed?.(3) ?? '—'}`)
  if (status === 'done') {
    console.log(`  run GET (summary + first pages): ${first.ms.toFixed(0)} ms, ${kib(first.bytes)}; totals ${JSON.stringify(body.totals)}`)
    console.log(`  overview (map + histograms): ${overview.ms.toFixed(0)} ms, ${kib(overview.bytes)}`)
    console.log(`  residual page 2 (sort=-absW&flagged=0): ${flagged.ms.toFixed(0)} ms, ${kib(flagged.bytes)}`)
    console.log(`  residuals CSV (streamed): ${csv.ms.toFixed(0)} ms, ${kib(csv.bytes)}`)
    console.log(`  upload → first page of the run report: ${(tUpload + tDone + first.ms).toFixed(0)} ms`)
  }
  return status === 'done' ? { projectId: fx.projectId, number: post.body.number } : null
}

async function pageLoad(target: { projectId: number; number: number }, stations: number) {
  const browser = await launch()
  try {
    const page = await newPage(browser)
    await signIn(page, DEMO.chief)
    const t0 = performance.now()
    await page.goto(`/f/${DEMO.firm}/projects/${target.projectId}/runs/${target.number}`, { waitUntil: 'networkidle', timeout: 120_000 })
    const idle = performance.now() - t0
    await page.getByTestId('network-map').locator('canvas').first().waitFor({ timeout: 60_000 })
    const painted = performance.now() - t0
    const rows = await page.locator('table tbody tr').count()
    const nodes = await page.evaluate(() => document.getElementsByTagName('*').length)
    await page.getByTestId('network-map').screenshot({ path: `tests/screenshots/bench-map-${stations}.png` })
    console.log(`\nrun page, ${stations.toLocaleString('en')} stations, headless Chromium: network idle ${idle.toFixed(0)} ms, map canvas ${painted.toFixed(0)} ms; ${rows} table rows, ${nodes.toLocaleString('en')} DOM elements`)
  } finally {
    await browser.close()
  }
}

/**
 * A finished run of `stations` stations with invented results, stored with the
 * worker's own COPY path, so the run page can be timed at a size the dense
 * engine cannot reach yet.
 */
async function inventedRun(chief: Client, stations: number) {
  const created = await chief.post(`/api/firms/${DEMO.firm}/projects`, { name: `Bench page ${stations} ${Date.now()}`, crs: 'local', units: 'm' })
  const projectId = Number(created.body.id)
  const db = useDb()
  const [firm] = await db.select().from(firms).where(eq(firms.slug, DEMO.firm))
  const [user] = await db.select().from(users).where(eq(users.email, DEMO.chief))
  const r = inventResult(stations)
  const rel = r.relative.map((p) => ({ rel: p, check: { semiMajor95: p.semiMajor95, allowable: 0.02 + 50e-6 * p.distance, passes: p.semiMajor95 <= 0.02 + 50e-6 * p.distance } }))
  const summary = buildSummary(r, null, rel.map((c) => c.check.passes), 0, ['invented results for the page benchmark'])
  // queued, not running: no job carries it, and the worker's sweep leaves queued runs alone
  const [run] = await db.insert(adjustments).values({ firmId: firm!.id, projectId, number: 1, settings: { confidence: 0.95 }, inputHash: 'bench', status: 'queued', createdBy: user!.id }).returning()
  const t0 = performance.now()
  await db.transaction(async (tx) => {
    summary.storeMs = await storeResults(tx, firm!.id, run!.id, r, new Map(), rel)
    await tx.update(adjustments).set({ status: 'done', finishedAt: new Date(), startedAt: new Date(), summary: summary as unknown as Record<string, unknown> }).where(eq(adjustments.id, run!.id))
  })
  console.log(`
invented ${stations.toLocaleString('en')}-station run (${r.observations.length.toLocaleString('en')} observation results, ${r.relative.length.toLocaleString('en')} pairs): stored with COPY in ${summary.storeMs} ms, ${(performance.now() - t0).toFixed(0)} ms with the commit`)
  const path = `/api/firms/${DEMO.firm}/projects/${projectId}/adjustments/1`
  const first = await timed(chief, path)
  const overview = await timed(chief, `${path}/overview`)
  const page2 = await timed(chief, `${path}/observations?sort=-absW&flagged=1&page=2`)
  console.log(`  run GET ${first.ms.toFixed(0)} ms, ${kib(first.bytes)}; overview ${overview.ms.toFixed(0)} ms, ${kib(overview.bytes)}; ?sort=-absW&flagged=1&page=2 ${page2.ms.toFixed(0)} ms`)
  return { projectId, number: 1 }
}

async function main() {
  await setup()
  try {
    const chief = await as(DEMO.chief)
    let forPage: { projectId: number; number: number } | null = null
    for (const n of SIZES) {
      const r = await oneSize(chief, n)
      if (r && n === PAGE_SIZE_STATIONS) forPage = r
    }
    if (forPage) await pageLoad(forPage, PAGE_SIZE_STATIONS)
    const invented = Number(process.env.TIEPOINT_BENCH_INVENTED_STATIONS ?? 10_000)
    if (invented > 0) await pageLoad(await inventedRun(chief, invented), invented)
  } finally {
    await teardown()
    await closeDb()
  }
}

main().catch((e) => {
  console.error(e)
  process.exitCode = 1
})
