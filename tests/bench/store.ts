// Bench: parse and store a 100,000-line observation CSV and a ~10 MB LandXML
// file into PostgreSQL through the upload service, in a throw-away project;
// then store the results of a 10,000-station run (TIEPOINT_BENCH_STORE_STATIONS)
// with the worker's COPY path and read a filtered page and the map data back.
// Prints rows/s and peak RSS. Targets (not asserted): uploads < 10 s and
// < 300 MB; storing a 10,000-station run < 5 s.
// Needs DATABASE_URL (e.g. the test cluster); skips with a message without it.
import { eq } from 'drizzle-orm'

if (!process.env.DATABASE_URL) {
  console.log('[bench store] skipped: DATABASE_URL is not set (run against a Tiepoint database, e.g. the test cluster)')
  process.exit(0)
}

const { closeDb, useDb } = await import('../../server/db/client')
const { firms, projects, users } = await import('../../server/db/schema')
const { uploadObservationSet } = await import('../../server/services/observations')
const { adjustments } = await import('../../server/db/schema')
const { storeResults, pageObservations, mapData } = await import('../../server/services/run-results')
const { observationPageQuery } = await import('../../shared/schemas/run-results')
const { inventResult } = await import('./invented-result')
const { xmlText } = await import('./landxml-text')

let peak = process.memoryUsage().rss
const sampler = setInterval(() => { peak = Math.max(peak, process.memoryUsage().rss) }, 20)

const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'
function csvText(lines: number): string {
  const out: string[] = [HEADER]
  for (let i = 1; i < lines; i++) {
    const at = `S${i % 500}`
    const to = `S${(i * 7 + 1) % 500 === i % 500 ? (i + 1) % 500 : (i * 7 + 1) % 500}`
    switch (i % 4) {
      case 0: out.push(`direction,${at},,${to},${i % 360} ${i % 60} ${(i % 600) / 10},dms,,,,${at}-R1,,`); break
      case 1: out.push(`zenith,${at},,${to},${80 + (i % 20)} 12 30.5,dms,,1.550,1.600,,,`); break
      case 2: out.push(`slope_distance,${at},,${to},${(100 + (i % 900) + 0.1234).toFixed(4)},m,,1.550,1.600,,,`); break
      default: out.push(`height_difference,${at},,${to},${((i % 200) / 100 - 1).toFixed(4)},m,,,,,0.${(i % 9) + 1},`)
    }
  }
  return out.join('\n') + '\n'
}
const db = useDb()
const [firm] = await db.select().from(firms).limit(1)
const [user] = await db.select().from(users).limit(1)
if (!firm || !user) {
  console.log('[bench store] skipped: the database has no firm or user yet (run the seed first)')
  process.exit(0)
}
const ctx = { user: { id: user.id, email: user.email, name: user.name, licenceNumber: null, licenceJurisdiction: null, via: 'session' as const }, firm, role: 'owner' as const }

// The text is built, encoded and dropped before the upload: the server holds
// only the uploaded bytes, so a second copy here would overstate peak RSS.
async function run(label: string, name: string, make: () => string) {
  const [project] = await db.insert(projects).values({ firmId: firm!.id, name: `bench ${label} ${Date.now()}`, crs: 'local', units: 'm' }).returning()
  let text: string | undefined = make()
  const lines = text.split('\n').length - 1
  const bytes = Buffer.from(text, 'utf8')
  text = undefined
  ;(globalThis as { gc?: () => void }).gc?.()
  const before = process.memoryUsage().rss
  peak = before
  const t0 = performance.now()
  const r = await uploadObservationSet(ctx, project!, { name, bytes })
  const s = (performance.now() - t0) / 1000
  console.log(`[bench store] ${label}: ${(bytes.length / 1048576).toFixed(1)} MB, ${lines} lines → ${r.observations} observations stored in ${s.toFixed(2)} s (${Math.round(r.observations / s).toLocaleString('en')} rows/s)${s < 10 ? '' : '  ABOVE the 10 s target'}; RSS ${(before / 1048576).toFixed(0)} MB before, peak ${(peak / 1048576).toFixed(0)} MB during the upload`)
  await db.delete(projects).where(eq(projects.id, project!.id))
}

async function storeRun(stations: number) {
  const [project] = await db.insert(projects).values({ firmId: firm!.id, name: `bench results ${Date.now()}`, crs: 'local', units: 'm' }).returning()
  const [run] = await db.insert(adjustments).values({ firmId: firm!.id, projectId: project!.id, number: 1, settings: {}, inputHash: 'bench', status: 'running' }).returning()
  const r = inventResult(stations)
  const rel = r.relative.map((p) => ({ rel: p, check: { semiMajor95: p.semiMajor95, allowable: 0.02 + 50e-6 * p.distance, passes: true } }))
  const t0 = performance.now()
  let copyMs = 0
  await db.transaction(async (tx) => { copyMs = await storeResults(tx, firm!.id, run!.id, r, new Map(), rel) })
  const total = performance.now() - t0
  const t1 = performance.now()
  await pageObservations(firm!.id, run!.id, undefined, observationPageQuery.parse({ sort: '-absW', flagged: '1', page: '2' }))
  const tPage = performance.now() - t1
  const t2 = performance.now()
  const map = await mapData(firm!.id, run!.id)
  const tMap = performance.now() - t2
  console.log(`[bench store] results of a ${r.stations.length.toLocaleString('en')}-station run (${r.observations.length.toLocaleString('en')} observations, ${r.relative.length.toLocaleString('en')} pairs, invented values): COPY ${copyMs} ms, with commit ${total.toFixed(0)} ms (target < 5 s); residual page 2 of ?sort=-absW&flagged=1 ${tPage.toFixed(0)} ms; map data ${tMap.toFixed(0)} ms, ${(JSON.stringify(map).length / 1024).toFixed(0)} KiB`)
  await db.delete(projects).where(eq(projects.id, project!.id))
}

try {
  await run('CSV 100,000 lines', 'bench.csv', () => csvText(100_000))
  await run('LandXML ~10 MB', 'bench.xml', () => xmlText(10 * 1024 * 1024))
  for (const n of (process.env.TIEPOINT_BENCH_STORE_STATIONS ?? '10000').split(',').map(Number).filter((x) => x > 0)) await storeRun(n)
} finally {
  clearInterval(sampler)
  await closeDb()
  peak = Math.max(peak, process.memoryUsage().rss)
  console.log(`[bench store] peak RSS ${(peak / 1048576).toFixed(0)} MB (target < 300 MB)`)
}
