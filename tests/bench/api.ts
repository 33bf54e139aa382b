// Benchmark: a 300-station invented network through the API and the queue.
// Reports the time from POST …/adjustments to `done`, the time to fetch the
// results page's data, and the size of that JSON. Figures only, no pass/fail.
// Run with `bash docker-free-scripts/bench-api.sh` (starts DB, app and worker).
import { performance } from 'node:perf_hooks'
import { closeDb } from '../../server/db/client'
import { projectWithNetwork } from '../api/adjustments-fixture'
import { as, DEMO } from '../support/http'
import { setup, teardown } from '../support/server-setup'

const ROWS = 15
const COLS = 20
const SPACING = 180

function prng(seed: number) {
  let a = seed >>> 0
  const u = () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  return () => Math.sqrt(-2 * Math.log(Math.max(u(), 1e-12))) * Math.cos(2 * Math.PI * u())
}

/** An invented grid-like network: directions and distances to neighbours, two held corners. */
function inventNetwork(): { csv: string; stations: number; observations: number } {
  const normal = prng(300)
  const pts: { name: string; e: number; n: number }[] = []
  for (let i = 0; i < ROWS; i++) for (let j = 0; j < COLS; j++) {
    pts.push({ name: `B${String(i * COLS + j + 1).padStart(3, '0')}`, e: 10_000 + j * SPACING + normal() * 20, n: 50_000 + i * SPACING + normal() * 20 })
  }
  const lines = ['kind,at,from,to,value,unit,sigma,hi,ht,set,length,note']
  lines.push(`control,${pts[0]!.name},,,${pts[0]!.e.toFixed(4)} ${pts[0]!.n.toFixed(4)},m,,,,,,`)
  const last = pts[pts.length - 1]!
  lines.push(`control,${last.name},,,${last.e.toFixed(4)} ${last.n.toFixed(4)},m,,,,,,`)
  let count = 0
  const sArc = 3 / 3600
  for (const p of pts) {
    const near = pts.filter((q) => q !== p && Math.hypot(q.e - p.e, q.n - p.n) < SPACING * 1.5)
    const orient = Math.abs(normal()) * 90
    for (const q of near) {
      const az = (Math.atan2(q.e - p.e, q.n - p.n) * 180) / Math.PI
      const dir = (((az - orient) % 360) + 360) % 360 + normal() * sArc
      lines.push(`direction,${p.name},,${q.name},${dir.toFixed(7)},deg,,,,${p.name}-1,,`)
      count++
      if (p.name < q.name) {
        const d = Math.hypot(q.e - p.e, q.n - p.n) + normal() * 0.0025
        lines.push(`horizontal_distance,${p.name},,${q.name},${d.toFixed(4)},m,,,,,,`)
        count++
      }
    }
  }
  return { csv: lines.join('\n') + '\n', stations: pts.length, observations: count }
}

async function main() {
  await setup()
  try {
    const net = inventNetwork()
    const fx = await projectWithNetwork(DEMO.firm, 'Bench 300', net.csv)
    const chief = await as(DEMO.chief)
    const base = `/api/firms/${DEMO.firm}/projects/${fx.projectId}/adjustments`
    const t0 = performance.now()
    const post = await chief.post(base, {})
    if (post.status !== 202) throw new Error(`POST answered ${post.status}: ${JSON.stringify(post.body)}`)
    const tPost = performance.now() - t0
    let status = post.body.status
    while (status === 'queued' || status === 'running') {
      await new Promise((r) => setTimeout(r, 100))
      status = (await chief.get(`${base}/${post.body.number}/status`)).body.status
    }
    const tDone = performance.now() - t0
    const t1 = performance.now()
    const res = await chief.raw(`${base}/${post.body.number}`)
    const text = await res.text()
    const tFetch = performance.now() - t1
    const body = JSON.parse(text)
    console.log(`network: ${net.stations} stations, ${net.observations} observations (invented)`)
    console.log(`run ${post.body.number}: ${status}${body.errorText ? ` (${body.errorText})` : ''}; engine ${body.summary?.engineMs ?? '?'} ms; σ̂0 ${body.summary?.sigma0?.toFixed?.(3) ?? '—'}`)
    console.log(`POST answered in ${tPost.toFixed(0)} ms; POST → done ${tDone.toFixed(0)} ms`)
    console.log(`results page data: ${tFetch.toFixed(0)} ms, ${(text.length / 1024).toFixed(0)} KiB JSON`)
  } finally {
    await teardown()
    await closeDb()
  }
}

main().catch((e) => {
  console.error(e)
  process.exitCode = 1
})
