// Every firm-scoped route, from one table (docs/architecture.md Roles and docs/api.md Errors: another
// firm's resource answers 404, never 403, and tests prove it for every route).
// Real resources exist on both sides (a project with an uploaded file, a
// finished run, a sign-off, a release, a crew, an instrument, an invitation, a
// spare member and station), so a route that forgot its firm filter would find
// the row and answer something other than 404. For each route:
//   - no session answers 401;
//   - a member of the second firm asking with the demo firm's slug and ids, and
//     with its own slug but the demo firm's ids, answers 404;
//   - a demo-firm user asking with the second firm's ids (under the demo slug),
//     and with the second firm's slug, answers 404;
//   - a demo-firm user on its own project with one child id (set, observation,
//     station, crew, release …) taken from the second firm answers 404;
//   - ids carried in bodies (signoffId, observationId, crewId, toleranceProfileId,
//     memberIds, observationSetIds) from the other firm are refused;
// and nothing is written: every row of both firms that the request could touch
// is unchanged. A route file under server/api/firms without a row here fails
// the suite.
import { readdirSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq, sql } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { firms } from '../../server/db/schema'
import { as, Client, DEMO } from '../support/http'
import { demoPassword } from '../support/env'
import { firmFixture, newSigner, type FirmFixture } from './tenancy-fixture'

afterAll(() => closeDb())

/** Every value a request writes carries this, so a stray write can be found by text. */
const MARK = 'iso-probe'
type Side = 'demo' | 'other'
type BodyFn = (ids: Record<string, number | string>) => unknown

interface RouteRow {
  method: 'GET' | 'POST' | 'PATCH' | 'DELETE'
  /** the route as its file names it: :firm and the other :params */
  path: string
  /** query string (may use :params) */
  query?: string
  /** a body that would be valid for the side's own ids, so a 404 cannot come from validation */
  body?: BodyFn
  /** who asks on each side when an owner may not (sign-off needs a licensed surveyor) */
  actor?: 'signer'
}

const csvFile = (note: string) => {
  const form = new FormData()
  const text = `kind,at,from,to,value,unit,sigma,hi,ht,set,length,note\nslope_distance,ISOA,,ISOB,101.2345,m,,1.5,1.6,,,${note}\n`
  form.append('file', new Blob([text]), `${MARK}-${Date.now()}-${Math.random().toString(36).slice(2, 6)}.csv`)
  return form
}

export const ROUTES: RouteRow[] = [
  { method: 'GET', path: '/api/firms/:firm/audit' },
  { method: 'GET', path: '/api/firms/:firm/crews' },
  { method: 'POST', path: '/api/firms/:firm/crews', body: () => ({ name: `${MARK} crew` }) },
  { method: 'PATCH', path: '/api/firms/:firm/crews/:crew', body: () => ({ name: `${MARK} crew renamed` }) },
  { method: 'DELETE', path: '/api/firms/:firm/crews/:crew' },
  { method: 'GET', path: '/api/firms/:firm/instruments' },
  {
    method: 'POST', path: '/api/firms/:firm/instruments', body: () => ({
      name: `${MARK} instrument`, distanceMm: 1, distancePpm: 1, directionArcsec: 1, zenithArcsec: 1,
      centeringInstrumentMm: 0.5, centeringTargetMm: 0.5, levellingMmPerSqrtKm: 1,
    }),
  },
  { method: 'PATCH', path: '/api/firms/:firm/instruments/:instrument', body: () => ({ name: `${MARK} instrument renamed` }) },
  { method: 'DELETE', path: '/api/firms/:firm/instruments/:instrument' },
  { method: 'GET', path: '/api/firms/:firm/invitations' },
  { method: 'POST', path: '/api/firms/:firm/invitations', body: () => ({ email: `${MARK}-invite@tiepoint.test`, role: 'client' }) },
  { method: 'DELETE', path: '/api/firms/:firm/invitations/:invitation' },
  { method: 'GET', path: '/api/firms/:firm/members' },
  { method: 'PATCH', path: '/api/firms/:firm/members/:member', body: () => ({ role: 'client' }) },
  { method: 'DELETE', path: '/api/firms/:firm/members/:member' },
  { method: 'GET', path: '/api/firms/:firm/projects' },
  { method: 'POST', path: '/api/firms/:firm/projects', body: () => ({ name: `${MARK} project`, crs: 'local', units: 'm' }) },
  { method: 'GET', path: '/api/firms/:firm/projects/:project' },
  { method: 'PATCH', path: '/api/firms/:firm/projects/:project', body: () => ({ name: `${MARK} renamed` }) },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/access' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/access', body: () => ({ email: `${MARK}-client@example.test` }) },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments', body: () => ({}) },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/status' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/stations', query: 'sort=-east&page=1' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/observations', query: 'sort=-absW&flagged=0' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/relative' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/vectors' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/overview' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/compare', query: 'a=:number&b=:number' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/export/coordinates.csv' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/adjustments/:number/export/residuals.csv' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments/:number/exclude', body: (ids) => ({ observationId: ids.observation }) },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments/:number/signoff-request', body: () => ({ note: MARK }) },
  {
    method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments/:number/signoffs', actor: 'signer',
    body: () => ({ statement: `${MARK}: certified by someone who must not be able to`, password: demoPassword, acknowledgeFailedTests: true }),
  },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/crews' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/crews', body: (ids) => ({ crewId: ids.crew }) },
  { method: 'DELETE', path: '/api/firms/:firm/projects/:project/crews/:crew' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/observation-sets' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/observation-sets', body: () => csvFile(MARK) },
  {
    method: 'POST', path: '/api/firms/:firm/projects/:project/observation-sets/manual',
    body: () => ({ rows: [{ kind: 'slope_distance', at: 'ISOA', to: 'ISOB', value: '99.1234', unit: 'm', note: MARK }] }),
  },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/observation-sets/:set/file' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/observations' },
  { method: 'PATCH', path: '/api/firms/:firm/projects/:project/observations/:observation', body: () => ({ excluded: true, reason: MARK }) },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/releases' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/releases', body: (ids) => ({ signoffId: ids.signoff, note: MARK }) },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/releases/:release/files/:format' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/signoffs' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/signoffs/candidates' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/signoffs/preview', query: 'run=:number' },
  { method: 'GET', path: '/api/firms/:firm/projects/:project/stations' },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/stations', body: () => ({ name: 'ISOPROBE', description: MARK, kind: 'new' }) },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/stations/import', body: () => ({ text: 'ISOPROBE,1000.000,2000.000\n' }) },
  { method: 'PATCH', path: '/api/firms/:firm/projects/:project/stations/:station', body: () => ({ description: MARK }) },
  { method: 'DELETE', path: '/api/firms/:firm/projects/:project/stations/:station' },
  { method: 'GET', path: '/api/firms/:firm/tolerance-profiles' },
  {
    method: 'POST', path: '/api/firms/:firm/tolerance-profiles',
    body: () => ({ kind: 'custom', name: `${MARK} rule`, mm: 10, ppm: 10, source: 'invented rule for tests' }),
  },
]

/** Ids that are relative to their parent (run numbers) or not ids at all (formats) are never swapped alone. */
const RELATIVE = new Set(['firm', 'project', 'number', 'format'])
const paramsOf = (path: string) => [...path.matchAll(/:(\w+)/g)].map((m) => m[1]!).filter((p) => p !== 'firm')

/** The route of every file under server/api/firms, in the table's notation. */
function routeFiles(): string[] {
  const root = 'server/api'
  const out: string[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = join(dir, name)
      if (statSync(full).isDirectory()) walk(full)
      else if (name.endsWith('.ts')) {
        const m = relative(root, full).match(/^(.*)\.(get|post|patch|put|delete)\.ts$/)
        if (!m) { out.push(`UNKNOWN ${full}`); continue }
        const path = `/api/${m[1]!}`.replace(/\[(\w+)\]/g, ':$1').replace(/\/index$/, '')
        out.push(`${m[2]!.toUpperCase()} ${path}`)
      }
    }
  }
  walk(join(root, 'firms'))
  return out.sort()
}

let demo: FirmFixture
let other: FirmFixture
const actors: Record<Side, { owner: Client; signer: Client }> = {} as never

beforeAll(async () => {
  const db = useDb()
  const [d] = await db.select().from(firms).where(eq(firms.slug, DEMO.firm))
  const [k] = await db.select().from(firms).where(eq(firms.slug, DEMO.otherFirm))
  const [owner, chief, surveyor, otherOwner] = await Promise.all([as(DEMO.owner), as(DEMO.chief), as(DEMO.surveyor), as(DEMO.other)])
  const otherSigner = await newSigner(k!.id, 'kestrel')
  demo = await firmFixture(DEMO.firm, d!.id, chief, surveyor, owner, 'isolation-demo')
  other = await firmFixture(DEMO.otherFirm, k!.id, otherOwner, otherSigner, otherOwner, 'isolation-other')
  actors.demo = { owner, signer: surveyor }
  actors.other = { owner: otherOwner, signer: otherSigner }
}, 240_000)

const fixtureOf = (s: Side) => (s === 'demo' ? demo : other)

/** Fills a route: the slug of `slugSide`, ids of `idSide`, with single params overridden. */
function url(r: RouteRow, slugSide: Side, idSide: Side, swap: Record<string, Side> = {}) {
  const pick = (p: string) => fixtureOf(swap[p] ?? idSide).ids[p]
  const fill = (s: string) => s.replace(/:(\w+)/g, (_m, p: string) => (p === 'firm' ? fixtureOf(slugSide).firm : String(pick(p))))
  return fill(r.path) + (r.query ? `?${fill(r.query)}` : '')
}

/**
 * Rows of both firms a request could touch, as one fingerprint per table: all
 * rows of the second firm; of the demo firm (which other suites share) the
 * rows of this suite's project, of this suite's firm-level fixtures, and any
 * row carrying the probe mark. Users carrying the mark are counted too.
 */
let fingerprintSql: ReturnType<typeof sql> | null = null
async function fingerprint(): Promise<Record<string, string>> {
  const db = useDb()
  if (!fingerprintSql) {
    const cols = (await db.execute(sql`select table_name, column_name from information_schema.columns
      where table_schema = 'public' and column_name in ('firm_id', 'project_id')`)).rows as { table_name: string; column_name: string }[]
    const tables = [...new Set(cols.filter((c) => c.column_name === 'firm_id').map((c) => c.table_name))].sort()
    const hasProject = new Set(cols.filter((c) => c.column_name === 'project_id').map((c) => c.table_name))
    const parts = tables.map((t) => {
      const own = demo.own[t] ?? []
      const demoScope = [
        hasProject.has(t) ? `t.project_id = ${Number(demo.ids.project)}` : null,
        t === 'projects' ? `t.id = ${Number(demo.ids.project)}` : null,
        own.length ? `t.id in (${own.map(Number).join(',')})` : null,
        `t::text ilike '%${MARK}%'`,
      ].filter(Boolean).join(' or ')
      return `select '${t}' as tbl, count(*)::text || ':' || md5(coalesce(string_agg(t::text, '|' order by t::text), '')) as fp
        from "${t}" t where t.firm_id = ${other.firmId} or (t.firm_id = ${demo.firmId} and (${demoScope}))`
    })
    parts.push(`select 'users' as tbl, count(*)::text as fp from users t where t.email ilike '%${MARK}%'`)
    fingerprintSql = sql.raw(parts.join('\nunion all\n'))
  }
  const rows = (await db.execute(fingerprintSql)).rows as { tbl: string; fp: string }[]
  return Object.fromEntries(rows.map((r) => [r.tbl, r.fp]))
}

async function expectNothingWritten(run: () => Promise<void>) {
  const before = await fingerprint()
  await run()
  const after = await fingerprint()
  const changed = Object.keys(before).filter((t) => before[t] !== after[t])
  expect(changed, `tables written: ${changed.join(', ')}`).toEqual([])
}

async function ask(c: Client, r: RouteRow, path: string, bodyIds: Side) {
  return c.request(r.method, path, r.body?.(fixtureOf(bodyIds).ids))
}
const key = (r: RouteRow) => `${r.method} ${r.path}`

describe('the isolation table', () => {
  it('has a row for every route file under server/api/firms and no row without a file', () => {
    const files = routeFiles()
    const rows = ROUTES.map(key).sort()
    expect(files.filter((f) => !rows.includes(f)), 'route files without a row in ROUTES').toEqual([])
    expect(rows.filter((r) => !files.includes(r)), 'rows in ROUTES without a route file').toEqual([])
    expect(new Set(rows).size).toBe(rows.length)
  })

  it('the nothing-written check sees a real write (a demo owner renaming their own project)', async () => {
    const before = await fingerprint()
    const res = await actors.demo.owner.patch(`/api/firms/${DEMO.firm}/projects/${demo.ids.project}`, { description: `${MARK} legit edit` })
    expect(res.status).toBe(200)
    const after = await fingerprint()
    expect(Object.keys(before).filter((t) => before[t] !== after[t])).toContain('projects')
  })
})

describe('firm isolation', () => {
  for (const r of ROUTES) {
    const params = paramsOf(r.path)
    const children = params.filter((p) => !RELATIVE.has(p))
    const actor = (s: Side) => (r.actor === 'signer' ? actors[s].signer : actors[s].owner)

    it(`${key(r)}: no session answers 401 and writes nothing`, async () => {
      await expectNothingWritten(async () => {
        const res = await ask(new Client(), r, url(r, 'demo', 'demo'), 'demo')
        expect(res.status, JSON.stringify(res.body)).toBe(401)
      })
    })

    it(`${key(r)}: the second firm's member gets 404 for the demo firm's slug and ids`, async () => {
      await expectNothingWritten(async () => {
        const res = await ask(actor('other'), r, url(r, 'demo', 'demo'), 'demo')
        expect(res.status, JSON.stringify(res.body)).toBe(404)
      })
    })

    it(`${key(r)}: a demo-firm user gets 404 for the second firm's slug and ids`, async () => {
      await expectNothingWritten(async () => {
        const res = await ask(actor('demo'), r, url(r, 'other', 'other'), 'other')
        expect(res.status, JSON.stringify(res.body)).toBe(404)
      })
    })

    if (params.length) {
      it(`${key(r)}: a demo-firm user gets 404 for the second firm's ids under the demo slug`, async () => {
        await expectNothingWritten(async () => {
          const res = await ask(actor('demo'), r, url(r, 'demo', 'other'), 'other')
          expect(res.status, JSON.stringify(res.body)).toBe(404)
        })
      })
      it(`${key(r)}: the second firm's member gets 404 for the demo firm's ids under its own slug`, async () => {
        await expectNothingWritten(async () => {
          const res = await ask(actor('other'), r, url(r, 'other', 'demo'), 'demo')
          expect(res.status, JSON.stringify(res.body)).toBe(404)
        })
      })
    }

    for (const child of children) {
      it(`${key(r)}: own ids but the other firm's :${child} answers 404 (both firms)`, async () => {
        await expectNothingWritten(async () => {
          const a = await ask(actor('demo'), r, url(r, 'demo', 'demo', { [child]: 'other' }), 'demo')
          expect(a.status, `demo asks: ${JSON.stringify(a.body)}`).toBe(404)
          const b = await ask(actor('other'), r, url(r, 'other', 'other', { [child]: 'demo' }), 'other')
          expect(b.status, `second firm asks: ${JSON.stringify(b.body)}`).toBe(404)
        })
      })
    }
  }
})

/** Ids inside bodies: the route and project are one's own, the referenced row is the other firm's. */
const BODY_REFS: { method: 'POST' | 'PATCH'; path: string; body: BodyFn }[] = [
  { method: 'POST', path: '/api/firms/:firm/projects/:project/releases', body: (ids) => ({ signoffId: ids.signoff, note: MARK }) },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments/:number/exclude', body: (ids) => ({ observationId: ids.observation }) },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/crews', body: (ids) => ({ crewId: ids.crew }) },
  { method: 'PATCH', path: '/api/firms/:firm/projects/:project', body: (ids) => ({ toleranceProfileId: ids.tolerance }) },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments', body: (ids) => ({ observationSetIds: [ids.set] }) },
  { method: 'POST', path: '/api/firms/:firm/projects/:project/adjustments', body: (ids) => ({ toleranceProfileId: ids.tolerance }) },
  { method: 'POST', path: '/api/firms/:firm/crews', body: (ids) => ({ name: `${MARK} crew`, memberIds: [ids.memberUser] }) },
  { method: 'PATCH', path: '/api/firms/:firm/crews/:crew', body: (ids) => ({ memberIds: [ids.memberUser] }) },
  {
    method: 'POST', path: '/api/firms/:firm/projects/:project/observation-sets/manual',
    body: (ids) => ({ rows: [{ kind: 'slope_distance', at: 'ISOA', to: 'ISOB', value: '99.1234', unit: 'm', note: MARK }], crewId: ids.crew }),
  },
  {
    method: 'POST', path: '/api/firms/:firm/projects/:project/observation-sets/manual',
    body: (ids) => ({ rows: [{ kind: 'slope_distance', at: 'ISOA', to: 'ISOB', value: '99.1234', unit: 'm', note: MARK }], instrumentProfileId: ids.instrument }),
  },
]

describe('ids inside bodies', () => {
  for (const b of BODY_REFS) {
    const what = JSON.stringify(b.body({ signoff: 'S', observation: 'O', crew: 'C', tolerance: 'T', set: 'E', memberUser: 'U', instrument: 'I' }))
    it(`${b.method} ${b.path} ${what}: the other firm's id is refused (404 or 422) and nothing is written`, async () => {
      const r: RouteRow = { method: b.method, path: b.path, body: b.body }
      await expectNothingWritten(async () => {
        const a = await ask(actors.demo.owner, r, url(r, 'demo', 'demo'), 'other')
        expect([404, 422], `demo asks: ${a.status} ${JSON.stringify(a.body)}`).toContain(a.status)
        const c = await ask(actors.other.owner, r, url(r, 'other', 'other'), 'demo')
        expect([404, 422], `second firm asks: ${c.status} ${JSON.stringify(c.body)}`).toContain(c.status)
      })
    })
  }
})
