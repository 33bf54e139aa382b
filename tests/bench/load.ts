// Load bench: 50 signed-in people for 60 s on loopback (autocannon), each
// connection cycling through run-report reads, observation pages and uploads
// (4 : 4 : 1). Prints requests, errors (0 expected), status codes and latency
// p50 / p95 / p99. Figures only, never pass/fail; the machine is shared, so
// the load average is printed beside them.
// Run with `bash docker-free-scripts/bench-api.sh` (database, app and worker).
//   TIEPOINT_LOAD_SECONDS (default 60), TIEPOINT_LOAD_USERS (default 50)
import { loadavg } from 'node:os'
import autocannon from 'autocannon'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { firms, memberships, users } from '../../server/db/schema'
import { hashPassword } from '../../server/services/passwords'
import { DEMO_CSV, projectWithNetwork, waitForRun } from '../api/adjustments-fixture'
import { as, DEMO } from '../support/http'
import { baseUrl } from '../support/env'
import { setup, teardown } from '../support/server-setup'

const SECONDS = Number(process.env.TIEPOINT_LOAD_SECONDS ?? 60)
const USERS = Number(process.env.TIEPOINT_LOAD_USERS ?? 50)
const PASSWORD = 'load-bench-password-1'

/** USERS party chiefs of the demo firm (invented), each signed in: their session cookies. */
async function signedInPeople(): Promise<string[]> {
  const db = useDb()
  const [firm] = await db.select().from(firms).where(eq(firms.slug, DEMO.firm))
  const hash = await hashPassword(PASSWORD)
  const stamp = Date.now()
  const cookies: string[] = []
  for (let i = 0; i < USERS; i++) {
    const email = `load-${stamp}-${i}@tiepoint.test`
    const [u] = await db.insert(users).values({ email, name: `Load bench ${i}`, passwordHash: hash }).returning()
    await db.insert(memberships).values({ firmId: firm!.id, userId: u!.id, role: 'party_chief' })
    const c = await as(email, PASSWORD)
    cookies.push([...c.cookies].map(([k, v]) => `${k}=${v}`).join('; '))
  }
  return cookies
}

const quantile = (sorted: number[], q: number) => sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))] ?? NaN

async function main() {
  await setup()
  try {
    const chief = await as(DEMO.chief)
    const report = await projectWithNetwork(DEMO.firm, 'Load bench reports', DEMO_CSV)
    const uploads = await projectWithNetwork(DEMO.firm, 'Load bench uploads', DEMO_CSV)
    const runs = `/api/firms/${DEMO.firm}/projects/${report.projectId}/adjustments`
    const q = await chief.post(runs, {})
    if (q.status !== 202) throw new Error(`queueing the report run answered ${q.status}`)
    await waitForRun(async () => (await chief.get(`${runs}/${q.body.number}/status`)).body, 120_000)
    const cookies = await signedInPeople()
    const pages = Math.max(1, Math.ceil(report.read.observations.length / 50))

    const boundary = 'tiepoint-load-bench-boundary'
    let uploadNo = 0
    const uploadBody = () => {
      uploadNo++
      const csv = `kind,at,from,to,value,unit,sigma,hi,ht,set,length,note\nhorizontal_distance,CP1,,LB${uploadNo % 97},${(100 + uploadNo / 1000).toFixed(4)},m,2,,,,,load ${process.pid}-${uploadNo}\n`
      return `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="load-${uploadNo}.csv"\r\nContent-Type: text/csv\r\n\r\n${csv}\r\n--${boundary}--\r\n`
    }
    const byKind: Record<string, Record<number, number>> = { report: {}, page: {}, upload: {} }
    const count = (kind: string) => (status: number) => { byKind[kind]![status] = (byKind[kind]![status] ?? 0) + 1 }
    // every request goes through setupRequest: autocannon 8 keeps the connection's
    // cookie (setupClient → setHeaders) only on requests built that way
    const reportReq = { method: 'GET' as const, path: `${runs}/${q.body.number}`, onResponse: count('report'), setupRequest: (req: autocannon.Request) => ({ ...req }) }
    const pageReq = {
      method: 'GET' as const, path: '/', onResponse: count('page'),
      setupRequest: (req: autocannon.Request) => ({ ...req, path: `/api/firms/${DEMO.firm}/projects/${report.projectId}/observations?page=${1 + Math.floor(Math.random() * pages)}&pageSize=50` }),
    }
    const uploadReq = {
      method: 'POST' as const, onResponse: count('upload'), path: `/api/firms/${DEMO.firm}/projects/${uploads.projectId}/observation-sets`,
      setupRequest: (req: autocannon.Request) => ({ ...req, headers: { ...req.headers, 'content-type': `multipart/form-data; boundary=${boundary}` }, body: uploadBody() }),
    }

    const latencies: number[] = []
    let client = 0
    const loadBefore = loadavg()
    console.log(`load: ${USERS} signed-in people for ${SECONDS} s on ${baseUrl}; reports : observation pages : uploads = 4 : 4 : 1`)
    const instance = autocannon({
      url: baseUrl,
      connections: USERS,
      duration: SECONDS,
      headers: { origin: baseUrl, 'sec-fetch-site': 'same-origin' },
      requests: [reportReq, pageReq, reportReq, pageReq, reportReq, pageReq, reportReq, pageReq, uploadReq],
      setupClient: (c: autocannon.Client) => { c.setHeaders({ origin: baseUrl, 'sec-fetch-site': 'same-origin', cookie: cookies[client++ % cookies.length]! }) },
    }) as unknown as autocannon.Instance & Promise<autocannon.Result> // without a callback it is both (autocannon README)
    instance.on('response', (_c: unknown, _status: number, _bytes: number, ms: number) => { latencies.push(ms) })
    const r = await instance
    const loadAfter = loadavg()
    latencies.sort((a, b) => a - b)
    const codes = Object.entries(r.statusCodeStats ?? {}).map(([k, v]) => `${k}: ${(v as { count: number }).count}`).join(', ')
    console.log(`  requests: ${r.requests.total} (${r.requests.average.toFixed(1)} per s), uploads stored: ${uploadNo}`)
    console.log(`  errors: ${r.errors}, timeouts: ${r.timeouts}, non-2xx answers: ${r.non2xx} (0 expected); status codes: ${codes}`)
    console.log(`  status codes by kind: ${Object.entries(byKind).map(([k, v]) => `${k} ${JSON.stringify(v)}`).join(', ')}`)
    console.log(`  latency: p50 ${quantile(latencies, 0.5).toFixed(0)} ms, p95 ${quantile(latencies, 0.95).toFixed(0)} ms, p99 ${quantile(latencies, 0.99).toFixed(0)} ms, max ${latencies.at(-1)?.toFixed(0)} ms`)
    console.log(`  machine load average (1 min) before ${loadBefore[0]!.toFixed(2)}, after ${loadAfter[0]!.toFixed(2)} (shared machine)`)
  } finally {
    await teardown()
    await closeDb()
  }
}

main().catch((e) => {
  console.error(e)
  process.exitCode = 1
})
