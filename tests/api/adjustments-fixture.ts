// Test data for the adjustment suites: a fresh project of the demo firm holding
// one observation file, written straight to the database (the upload route
// belongs to another feature; these suites test runs, not uploads).
import { createHash } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { and, eq } from 'drizzle-orm'
import { useDb } from '../../server/db/client'
import { firms, memberships, observationSets, observations, projects, stations, users } from '../../server/db/schema'
import { DEMO_PROJECT_HEIGHT_M } from '../../server/db/demo/generate'
import { readObservationCsv } from '../../server/engine/io/csv'
import type { FirmContext } from '../../server/utils/guard'

export const DEMO_CSV = readFileSync('server/db/demo/demo-network.csv', 'utf8')
export const BLUNDER = JSON.parse(readFileSync('server/db/demo/blunder.json', 'utf8')) as { line: number; kind: string; at: string; to: string }

export function readCsv(text: string) {
  const read = readObservationCsv(text)
  if (!read.ok) throw new Error(`fixture CSV does not read: ${JSON.stringify(read.errors.slice(0, 3))}`)
  return read
}

/** Creates a project in `firmSlug` and stores `csv` as its one observation set; returns ids. */
export async function projectWithNetwork(firmSlug: string, name: string, csv: string) {
  const db = useDb()
  const [firm] = await db.select().from(firms).where(eq(firms.slug, firmSlug))
  const [p] = await db.insert(projects).values({ firmId: firm!.id, name: `${name} ${Date.now()}-${Math.random().toString(36).slice(2, 7)}`, crs: 'local', units: 'm', projectHeightM: csv === DEMO_CSV ? DEMO_PROJECT_HEIGHT_M : null }).returning()
  const read = readCsv(csv)
  const bytes = Buffer.from(csv)
  const [set] = await db.insert(observationSets).values({
    firmId: firm!.id, projectId: p!.id, name: 'network.csv', format: 'csv', content: bytes, sizeBytes: bytes.length,
    sha256: createHash('sha256').update(bytes).digest('hex'),
  }).returning()
  const rows = await db.insert(observations).values(read.observations.map((o) => ({
    firmId: firm!.id, projectId: p!.id, setId: set!.id, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to, value: o.value,
    sigma: o.sigma, hi: o.hi, ht: o.ht, setName: o.set, lengthKm: o.lengthKm, note: o.note,
  }))).returning({ id: observations.id, line: observations.line })
  const names = new Set<string>()
  for (const o of read.observations) { names.add(o.at); names.add(o.to); if (o.from) names.add(o.from) }
  for (const c of read.controls) names.add(c.station)
  await db.insert(stations).values([...names].map((n) => {
    const c = read.controls.find((x) => x.station === n)
    return {
      firmId: firm!.id, projectId: p!.id, name: n, kind: c ? 'control' as const : 'new' as const,
      controlEast: c?.east ?? null, controlNorth: c?.north ?? null, controlHeight: c?.height ?? null,
      sdEast: c?.sdEast ?? null, sdNorth: c?.sdNorth ?? null, sdHeight: c?.sdHeight ?? null,
    }
  }))
  return { firmId: firm!.id, projectId: p!.id, setId: set!.id, read, obsIdByLine: new Map(rows.map((r) => [r.line, r.id])) }
}

/** The firm context a route would build for `email` in `firmSlug` (for calling services directly). */
export async function contextFor(email: string, firmSlug: string): Promise<FirmContext> {
  const db = useDb()
  const [row] = await db.select({ firm: firms, role: memberships.role, user: users }).from(memberships)
    .innerJoin(firms, eq(firms.id, memberships.firmId)).innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(firms.slug, firmSlug), eq(users.email, email)))
  if (!row) throw new Error(`${email} is not in ${firmSlug}`)
  return { firm: row.firm, role: row.role, user: { id: row.user.id, email: row.user.email, name: row.user.name, licenceNumber: null, licenceJurisdiction: null, via: 'session' } }
}

/** Polls a run until it leaves queued/running (or the time is up). */
export async function waitForRun(get: () => Promise<{ status: string }>, timeoutMs = 60_000, wanted: (s: string) => boolean = (s) => s === 'done' || s === 'failed') {
  const until = Date.now() + timeoutMs
  let last = ''
  while (Date.now() < until) {
    last = (await get()).status
    if (wanted(last)) return last
    await new Promise((r) => setTimeout(r, 250))
  }
  throw new Error(`run still ${last} after ${timeoutMs} ms`)
}
