// Observation uploads and edits against the real server and database
// (docs/architecture.md, docs/file-format.md, docs/api.md): counts come from counting the fixture rows
// here, not from our own output; bytes are compared by SHA-256.
import { readFileSync } from 'node:fs'
import { and, asc, eq } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeDb, makePool, useDb } from '../../server/db/client'
import { auditLog, observations } from '../../server/db/schema'
import { as, DEMO, type Client } from '../support/http'
import { auditRows, counts, fileForm, freshProject, outsiderCrewClient, sha256 } from './fielddata-helpers'

const DEMO_CSV = readFileSync('server/db/demo/demo-network.csv')
const DEMO_XML = readFileSync('server/db/demo/demo-network.xml')
const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'

/** Data rows of a Tiepoint CSV, counted independently of the reader: not blank, not '#', not the header. */
function dataRows(text: string) {
  return text.split('\n').map((l) => l.trim()).filter((l) => l !== '' && !l.startsWith('#')).slice(1)
}

let chief: Client, crew: Client, client: Client, other: Client
const base = (p: number) => `/api/firms/${DEMO.firm}/projects/${p}`

beforeAll(async () => {
  ;[chief, crew, client, other] = await Promise.all([as(DEMO.chief), as(DEMO.crew), as(DEMO.client), as(DEMO.other)])
})
afterAll(async () => { await closeDb() })

describe('upload', () => {
  it('stores a good CSV with every observation, the control and the bytes (201 with counts)', async () => {
    const p = await freshProject(chief, 'Upload good')
    const text = DEMO_CSV.toString('utf8')
    const rows = dataRows(text)
    const controlRows = rows.filter((r) => r.startsWith('control,')).length
    // the file holds control, so the party chief uploads it (a crew may not set control: crew-control.test.ts)
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('demo-network.csv', DEMO_CSV))
    expect(r.status).toBe(201)
    expect(r.body.sha256).toBe(sha256(DEMO_CSV))
    expect(r.body.controls).toBe(controlRows)
    expect(r.body.observations).toBe(rows.length - controlRows)
    expect(Array.isArray(r.body.warnings)).toBe(true)
    const c = await counts(p)
    expect(c.observations).toBe(rows.length - controlRows)
    expect(c.sets).toBe(1)
    // every station named in the file exists: control ones as control, the rest as new
    const names = new Set<string>()
    for (const row of rows) {
      const f = row.split(',')
      names.add(f[1]!)
      if (f[2]) names.add(f[2])
      if (f[3]) names.add(f[3])
    }
    const st = await chief.get(`${base(p)}/stations`)
    expect(new Set(st.body.map((s: { name: string }) => s.name))).toEqual(names)
    const cp1 = st.body.find((s: { name: string }) => s.name === 'CP1')
    expect(cp1.kind).toBe('control')
    expect(cp1.controlEast).toBe(1163.455) // first control line of the file: "1163.455 5112.797"
    expect(cp1.controlNorth).toBe(5112.797)
    // counted within this project only (the seed holds the same file in another project)
    const cp1Uses = rows.filter((row) => { const f = row.split(','); return f[0] !== 'control' && (f[1] === 'CP1' || f[2] === 'CP1' || f[3] === 'CP1') }).length
    expect(cp1.observationCount).toBe(cp1Uses)
    // the upload is audited with who and what
    const audit = await auditRows('observation_set', r.body.id)
    expect(audit.map((a) => a.action)).toContain('observation_set.upload')
    // source lines are the editor's line numbers: the first direction row of the file
    const firstDirection = text.split('\n').findIndex((l) => l.startsWith('direction,')) + 1
    const list = await crew.get(`${base(p)}/observations?setId=${r.body.id}&sort=line&pageSize=1`)
    expect(list.body.rows[0].line).toBe(firstDirection)
  })

  it('reads LandXML 1.2 detected by extension and by content', async () => {
    const p = await freshProject(chief, 'Upload xml')
    const raw = DEMO_XML.toString('utf8').match(/<RawObservation\b/g)!.length
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('network.xml', DEMO_XML))
    expect(r.status).toBe(201)
    expect(r.body.controls).toBe(DEMO_XML.toString('utf8').match(/pntSurv="control"/g)!.length)
    expect(r.body.observations).toBeGreaterThanOrEqual(raw) // each RawObservation gives one to three observations
    const sets = await chief.get(`${base(p)}/observation-sets`)
    expect(sets.body[0].format).toBe('landxml')
    // same content without an .xml name: still LandXML by its content; but same bytes → 409
    const again = await chief.post(`${base(p)}/observation-sets`, fileForm('network.dat', DEMO_XML))
    expect(again.status).toBe(409)
  })

  it('refuses a file with bad lines (422 listing every one) and writes nothing', async () => {
    const p = await freshProject(chief, 'Upload bad')
    const before = await counts(p)
    const bad = [
      HEADER,
      'control,A1,,,1000 2000,m,,,,,,',
      'direction,A1,,B2,12 30 00,dms,,,,,,',
      'slope_distance,A1,,B2,12x.5,m,,,,,,', // line 4: not a number
      'zenith,A1,,B2,91 00 00,dms,,,,,,',
      'teleport,A1,,B2,1,m,,,,,,', // line 6: unknown kind
      'horizontal_distance,A1,,,100.0,m,,,,,,', // line 7: no target
      'horizontal_distance,A1,,B2,100.0,m,,,,,,',
    ].join('\n')
    const r = await crew.post(`${base(p)}/observation-sets`, fileForm('bad.csv', bad))
    expect(r.status).toBe(422)
    expect(r.body.statusCode).toBe(422)
    const lines = [...new Set(r.body.errors.map((e: { line: number }) => e.line))].sort()
    expect(lines).toEqual([4, 6, 7])
    const byLine = Object.fromEntries(r.body.errors.map((e: { line: number; column: string }) => [e.line, e.column]))
    expect(byLine[4]).toBe('value')
    expect(byLine[6]).toBe('kind')
    expect(byLine[7]).toBe('to')
    expect(r.body.message).toMatch(/3 bad lines/)
    expect(await counts(p)).toEqual(before)
  })

  it('answers 409 for the same bytes twice, naming the earlier set', async () => {
    const p = await freshProject(chief, 'Upload dup')
    const text = `${HEADER}\nhorizontal_distance,A,,B,10.000,m,2,,,,,\n`
    const first = await chief.post(`${base(p)}/observation-sets`, fileForm('one.csv', text))
    expect(first.status).toBe(201)
    const second = await chief.post(`${base(p)}/observation-sets`, fileForm('renamed.csv', text))
    expect(second.status).toBe(409)
    expect(second.body.message).toContain(`set ${first.body.id}`)
    expect(second.body.message).toContain('one.csv')
    expect((await counts(p)).sets).toBe(1)
  })

  it('answers 413 for a file over 20 MB and for more than 200,000 lines', async () => {
    const p = await freshProject(chief, 'Upload big')
    const big = Buffer.alloc(20 * 1024 * 1024 + 10, 0x23) // '#' bytes: size alone decides
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('big.csv', big))
    expect(r.status).toBe(413)
    expect(r.body.message).toMatch(/20 MB/)
    const manyLines = `${HEADER}\n` + '#\n'.repeat(200_000)
    const r2 = await chief.post(`${base(p)}/observation-sets`, fileForm('long.csv', manyLines))
    expect(r2.status).toBe(413)
    expect(r2.body.message).toMatch(/200,000 lines/)
    expect((await counts(p)).sets).toBe(0)
  })

  it('returns the original bytes byte-identical with type and file name', async () => {
    const p = await freshProject(chief, 'Download')
    const withCrlf = Buffer.from(`\uFEFF${HEADER}\r\nhorizontal_distance,Ä1,,B2,10.000,m,2,,,,,"note, with comma"\r\n`, 'utf8')
    const up = await chief.post(`${base(p)}/observation-sets`, fileForm('crlf föö.csv', withCrlf))
    expect(up.status).toBe(201)
    const res = await chief.raw(`${base(p)}/observation-sets/${up.body.id}/file`)
    expect(res.status).toBe(200)
    const got = Buffer.from(await res.arrayBuffer())
    expect(sha256(got)).toBe(sha256(withCrlf))
    expect(res.headers.get('content-type')).toMatch(/text\/csv/)
    expect(res.headers.get('content-disposition')).toMatch(/attachment; filename=/)
    expect(res.headers.get('content-disposition')).toContain(encodeURIComponent('crlf föö.csv'))
  })
})

describe('who may upload', () => {
  it("hides a project from another firm (404) and from clients (404)", async () => {
    const p = await freshProject(chief, 'Isolation')
    const form = () => fileForm('x.csv', `${HEADER}\nhorizontal_distance,A,,B,10.5,m,2,,,,,\n`)
    expect((await other.post(`${base(p)}/observation-sets`, form())).status).toBe(404)
    expect((await other.get(`${base(p)}/observation-sets`)).status).toBe(404)
    expect((await other.get(`/api/firms/${DEMO.otherFirm}/projects/${p}/observation-sets`)).status).toBe(404)
    expect((await client.post(`${base(p)}/observation-sets`, form())).status).toBe(404)
    expect((await client.get(`${base(p)}/observations`)).status).toBe(404)
    expect((await counts(p)).sets).toBe(0)
  })

  it('refuses field crew of a crew not assigned to the project', async () => {
    const p = await freshProject(chief, 'Crew check')
    const outsider = await outsiderCrewClient()
    const r = await outsider.post(`${base(p)}/observation-sets`, fileForm('x.csv', `${HEADER}\nhorizontal_distance,A,,B,11.5,m,2,,,,,\n`))
    expect([403, 404]).toContain(r.status)
    expect((await counts(p)).sets).toBe(0)
    // while the assigned crew member may, and the set records their crew
    const ok = await crew.post(`${base(p)}/observation-sets`, fileForm('x.csv', `${HEADER}\nhorizontal_distance,A,,B,11.5,m,2,,,,,\n`))
    expect(ok.status).toBe(201)
    const sets = await crew.get(`${base(p)}/observation-sets`)
    expect(sets.body[0].crew.name).toBe('North crew')
    expect(sets.body[0].uploadedBy.name).toBeTruthy()
  })
})

describe('observations', () => {
  it('pages, filters and sorts on the server', async () => {
    const p = await freshProject(chief, 'Paging')
    const text = DEMO_CSV.toString('utf8')
    const up = await chief.post(`${base(p)}/observation-sets`, fileForm('demo.csv', DEMO_CSV))
    expect(up.status).toBe(201)
    const zeniths = dataRows(text).filter((r) => r.startsWith('zenith,')).length
    const page1 = await chief.get(`${base(p)}/observations?kind=zenith&pageSize=10&page=1`)
    expect(page1.body.total).toBe(zeniths)
    expect(page1.body.rows).toHaveLength(Math.min(10, zeniths))
    expect(page1.body.rows.every((r: { kind: string }) => r.kind === 'zenith')).toBe(true)
    const sorted = await chief.get(`${base(p)}/observations?kind=slope_distance&sort=value&dir=desc&pageSize=500`)
    const values = sorted.body.rows.map((r: { value: number }) => r.value)
    expect(values).toEqual([...values].sort((a: number, b: number) => b - a))
    const atCp1 = dataRows(text).filter((r) => { const f = r.split(','); return f[0] !== 'control' && (f[1] === 'CP1' || f[2] === 'CP1' || f[3] === 'CP1') }).length
    const st = await chief.get(`${base(p)}/observations?station=CP1&pageSize=1`)
    expect(st.body.total).toBe(atCp1)
    expect((await chief.get(`${base(p)}/observations?pageSize=5000`)).status).toBe(422)
  })

  it('edits a value and excludes an observation, audited, original value and file kept', async () => {
    const p = await freshProject(chief, 'Edit')
    const text = `${HEADER}\nhorizontal_distance,A,,B,100.0000,m,2,,,,,\ndirection,A,,B,10 00 00,dms,,,,,,\n`
    const up = await crew.post(`${base(p)}/observation-sets`, fileForm('edit.csv', text))
    expect(up.status).toBe(201)
    const list = await crew.get(`${base(p)}/observations?sort=line`)
    const dist = list.body.rows.find((r: { kind: string }) => r.kind === 'horizontal_distance')
    const dir = list.body.rows.find((r: { kind: string }) => r.kind === 'direction')
    expect(dir.display).toBe(`10°00'00.0"`)
    const e = await crew.patch(`${base(p)}/observations/${dist.id}`, { valueText: '100.0125' })
    expect(e.status).toBe(200)
    expect(e.body.value).toBeCloseTo(100.0125, 10)
    expect(e.body.originalValue).toBe(100)
    expect(e.body.edited).toBe(true)
    const x = await chief.patch(`${base(p)}/observations/${dir.id}`, { excluded: true })
    expect(x.body.excluded).toBe(true)
    const bad = await chief.patch(`${base(p)}/observations/${dir.id}`, { valueText: '10 61 00' })
    expect(bad.status).toBe(422)
    const a1 = await auditRows('observation', dist.id)
    expect(a1).toHaveLength(1)
    expect(a1[0]!.action).toBe('observation.update')
    expect((a1[0]!.before as { value: number }).value).toBe(100)
    expect((a1[0]!.after as { value: number }).value).toBeCloseTo(100.0125, 10)
    expect(a1[0]!.userId).not.toBeNull()
    const a2 = await auditRows('observation', dir.id)
    expect(a2.map((a) => a.action)).toEqual(['observation.exclude'])
    const [row] = await useDb().select().from(observations).where(and(eq(observations.id, dir.id)))
    expect(row!.excluded).toBe(true)
    const file = await crew.raw(`${base(p)}/observation-sets/${up.body.id}/file`)
    expect(Buffer.from(await file.arrayBuffer()).toString('utf8')).toBe(text)
    // another firm cannot touch it
    expect((await other.patch(`${base(p)}/observations/${dist.id}`, { excluded: true })).status).toBe(404)
  })

  it('adds typed-in rows through the same validation, as a manual set', async () => {
    const p = await freshProject(chief, 'Manual')
    const bad = await crew.post(`${base(p)}/observation-sets/manual`, {
      rows: [
        { kind: 'horizontal_distance', at: 'A', to: 'B', value: '50.5', sigma: '2' },
        { kind: 'horizontal_distance', at: 'A', to: 'B', value: 'fifty' },
        { kind: 'angle', at: 'A', to: 'B', value: '90 00 00' },
      ],
    })
    expect(bad.status).toBe(422)
    expect(bad.body.errors.map((e: { message: string }) => e.message.split(',')[0]).sort()).toEqual(['row 2', 'row 3'])
    expect((await counts(p)).sets).toBe(0)
    const good = await crew.post(`${base(p)}/observation-sets/manual`, {
      rows: [{ kind: 'horizontal_distance', at: 'A', to: 'B', value: '50.5', sigma: '2' }, { kind: 'zenith', at: 'A', to: 'B', value: '90 00 10', sigma: '3' }],
    })
    expect(good.status).toBe(201)
    expect(good.body.observations).toBe(2)
    const sets = await crew.get(`${base(p)}/observation-sets`)
    expect(sets.body[0].format).toBe('manual')
  })
})

describe('what is stored for each observation', () => {
  const rowsOf = (setId: number) => useDb().select().from(observations).where(eq(observations.setId, setId)).orderBy(asc(observations.line), asc(observations.id))

  it('keeps the unit the file used beside a value in metres or radians', async () => {
    const p = await freshProject(chief, 'Units kept')
    const text = [HEADER,
      'horizontal_distance,A,,B,328.084,ft,2,,,,,', // line 2
      'slope_distance,A,,B,100,usft,2,,,,,', // line 3
      'direction,A,,B,100,gon,,,,,,', // line 4
      'zenith,A,,B,90 00 00,,,,,,,', // line 5: blank unit, read as dms
      'height_difference,A,,B,1.5,,3,,,,,', // line 6: blank unit, read as m
    ].join('\n') + '\n'
    const up = await chief.post(`${base(p)}/observation-sets`, fileForm('feet.csv', text))
    expect(up.status).toBe(201)
    const rows = await rowsOf(up.body.id)
    expect(rows.map((r) => [r.line, r.unit])).toEqual([[2, 'ft'], [3, 'usft'], [4, 'gon'], [5, 'dms'], [6, 'm']])
    // values are SI: ft = 0.3048 m and usft = 1200/3937 m (NIST Handbook 44 App. C), 100 gon = π/2 (ISO 80000-3)
    expect(rows[0]!.value).toBeCloseTo(328.084 * 0.3048, 10)
    expect(rows[1]!.value).toBeCloseTo(100 * 1200 / 3937, 10)
    expect(rows[2]!.value).toBeCloseTo(Math.PI / 2, 12)
    expect(rows[3]!.value).toBeCloseTo(Math.PI / 2, 12)
    expect(rows.every((r) => r.originalValue === r.value)).toBe(true)
  })

  it('keeps the LandXML file units (U.S. survey feet, grads, radians for the azimuth)', async () => {
    const p = await freshProject(chief, 'Units xml')
    const xml = readFileSync('tests/fixtures/io/landxml-imperial.xml')
    const up = await chief.post(`${base(p)}/observation-sets`, fileForm('imperial.xml', xml))
    expect(up.status).toBe(201)
    const rows = await rowsOf(up.body.id)
    expect(rows.map((r) => [r.kind, r.unit]).sort()).toEqual([['azimuth', 'rad'], ['direction', 'gon'], ['slope_distance', 'usft'], ['zenith', 'gon']])
    // 3937 US survey feet = 1200 m (24 FR 5348, 1959)
    expect(rows.find((r) => r.kind === 'slope_distance')!.value).toBeCloseTo(1200, 9)
  })

  it('stores names, set names and notes with tabs, backslashes, line breaks and a literal \\N exactly; blanks stay null', async () => {
    const p = await freshProject(chief, 'Escapes')
    const text = [HEADER,
      'direction,ST\\1,,B\\2,10 00 00,dms,,,,"R\t1",,"a\tb \\ c \\N d"', // line 2
      'horizontal_distance,ST\\1,,B\\2,25.5,m,,,,,,"first line', // line 3 (the note spans two lines)
      'second line\\"', // line 4
      'height_difference,ST\\1,,B\\2,0.25,m,2,,,,,\\N', // line 5: a note that is literally backslash-N
    ].join('\n') + '\n'
    const up = await chief.post(`${base(p)}/observation-sets`, fileForm('escapes.csv', text))
    expect(up.status).toBe(201)
    const rows = await rowsOf(up.body.id)
    expect(rows.map((r) => r.line)).toEqual([2, 3, 5])
    expect(rows.map((r) => [r.at, r.to])).toEqual([['ST\\1', 'B\\2'], ['ST\\1', 'B\\2'], ['ST\\1', 'B\\2']])
    expect(rows[0]!.setName).toBe('R\t1')
    expect(rows[0]!.note).toBe('a\tb \\ c \\N d')
    expect(rows[1]!.note).toBe('first line\nsecond line\\')
    expect(rows[2]!.note).toBe('\\N')
    // blank cells are SQL null, not empty strings or zeros
    expect(rows[1]).toMatchObject({ from: null, sigma: null, hi: null, ht: null, setName: null, lengthKm: null, excluded: false })
    expect(rows[2]!.sigma).toBeCloseTo(0.002, 15)
  })

  it('refuses a NUL character in a cell with its line and column, and writes nothing', async () => {
    const p = await freshProject(chief, 'NUL')
    const text = `${HEADER}\nhorizontal_distance,A,,B,10.5,m,2,,,,,ok\nhorizontal_distance,A,,B,10.6,m,2,,,,,bad\u0000note\n`
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('nul.csv', text))
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([expect.objectContaining({ line: 3, column: 'note' })])
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
  })

  it('rolls back the set, control, stations and audit row when the database refuses a row half-way through', async () => {
    const p = await freshProject(chief, 'Rollback')
    // A trigger that refuses one marked row stands in for any failure during the bulk write.
    const marker = `refuse-${Date.now()}-${Math.random().toString(36).slice(2, 8)}`
    const fn = `tp_test_refuse_${marker.replace(/-/g, '_')}`
    const db = useDb()
    // the trigger is made by the owner role: the app's runtime role cannot change the schema
    const owner = makePool(process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL!, 1)
    await owner.query(`create function ${fn}() returns trigger language plpgsql as $$ begin raise exception 'refused by test'; end $$`)
    await owner.query(`create trigger ${fn} before insert on observations for each row when (new.note = '${marker}') execute function ${fn}()`)
    try {
      const lines = [HEADER, 'control,K1,,,1000 2000,m,,,,,,']
      for (let i = 0; i < 5000; i++) lines.push(`horizontal_distance,K1,,T${i % 50},${(100 + i / 1000).toFixed(3)},m,2,,,,,${i === 4000 ? marker : ''}`)
      const r = await chief.post(`${base(p)}/observation-sets`, fileForm('refused.csv', lines.join('\n') + '\n'))
      expect(r.status).toBe(500)
    } finally {
      await owner.query(`drop trigger if exists ${fn} on observations`)
      await owner.query(`drop function if exists ${fn}()`)
      await owner.end()
    }
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
    const audits = await db.select().from(auditLog).where(and(eq(auditLog.projectId, p), eq(auditLog.action, 'observation_set.upload')))
    expect(audits).toHaveLength(0)
    // the connection went back to the pool in a usable state: the same file without the marker is stored
    const lines = [HEADER, 'control,K1,,,1000 2000,m,,,,,,', 'horizontal_distance,K1,,T1,100.000,m,2,,,,,']
    const again = await chief.post(`${base(p)}/observation-sets`, fileForm('after.csv', lines.join('\n') + '\n'))
    expect(again.status).toBe(201)
    expect(await counts(p)).toEqual({ observations: 1, sets: 1, stations: 2 })
  })
})

describe('large LandXML, stored while it is read', () => {
  // A LandXML file written here (LandXML 1.2 schema: Units, CgPoints,
  // Survey/InstrumentSetup/RawObservation) with more RawObservations than the
  // reader hands out per batch, so rows reach the database before the end of
  // the file is read. Counts follow from how the file is built: two
  // RawObservations per set-up, each a direction and a slope distance.
  const SETUPS = 1500
  function bigXml(opts: { badAt?: number; controlLast?: boolean } = {}) {
    const out = ['<?xml version="1.0" encoding="UTF-8"?>', '<LandXML version="1.2">',
      '<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>']
    if (!opts.controlLast) out.push('<CgPoints><CgPoint name="L0" pntSurv="control">5000 1000</CgPoint></CgPoints>')
    out.push('<Survey>')
    for (let s = 0; s < SETUPS; s++) {
      out.push(`<InstrumentSetup id="U${s}" stationName="L${s % 40}">`)
      for (let k = 1; k <= 2; k++) {
        const d = s === opts.badAt && k === 2 ? '12O.5' : (120 + k + (s % 7) / 10).toFixed(3)
        out.push(`<RawObservation horizAngle="${k * 90}" slopeDistance="${d}"><TargetPoint pntRef="L${(s + k) % 40}"/></RawObservation>`)
      }
      out.push('</InstrumentSetup>')
    }
    out.push('</Survey>')
    if (opts.controlLast) out.push('<CgPoints><CgPoint name="L0" pntSurv="control">5000 1000</CgPoint></CgPoints>')
    out.push('</LandXML>', '')
    return out.join('\n')
  }
  /** 1-based line of a substring in the text, counted here. */
  const lineOf = (text: string, needle: string) => text.slice(0, text.indexOf(needle)).split('\n').length

  it('stores every observation of a file larger than one batch', async () => {
    const p = await freshProject(chief, 'Large LandXML')
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('large.xml', bigXml()))
    expect(r.status).toBe(201)
    expect(r.body.observations).toBe(SETUPS * 2 * 2)
    expect(await counts(p)).toEqual({ observations: SETUPS * 4, sets: 1, stations: 40 })
  })

  it('a bad value near the end, after earlier rows went to the database, answers 422 with its line and writes nothing', async () => {
    const p = await freshProject(chief, 'Large LandXML bad tail')
    const xml = bigXml({ badAt: SETUPS - 3 })
    const r = await chief.post(`${base(p)}/observation-sets`, fileForm('bad-tail.xml', xml))
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([expect.objectContaining({ line: lineOf(xml, 'slopeDistance="12O.5"'), column: expect.stringMatching(/InstrumentSetup\[1498\]\/RawObservation\[2\]@slopeDistance$/) })])
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
    const audits = await useDb().select().from(auditLog).where(and(eq(auditLog.projectId, p), eq(auditLog.action, 'observation_set.upload')))
    expect(audits).toHaveLength(0)
  })

  it("a field crew's file whose control point comes after the survey is refused and writes nothing", async () => {
    const p = await freshProject(chief, 'Large LandXML crew control')
    const xml = bigXml({ controlLast: true })
    const r = await crew.post(`${base(p)}/observation-sets`, fileForm('crew-control.xml', xml))
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([expect.objectContaining({ line: lineOf(xml, '<CgPoint name="L0"'), column: 'CgPoint@pntSurv' })])
    expect(await counts(p)).toEqual({ observations: 0, sets: 0, stations: 0 })
  })
})

describe('σ used (the engine\'s own σ function)', () => {
  it('a profile-weighted angle shows the σ with centering at its lengths from the stored positions, not √2·σ_dir (regression)', async () => {
    const firm = `/api/firms/${DEMO.firm}`
    // invented profile: 2″ pointing, 1 mm centering of instrument and target
    const prof = await chief.post(`${firm}/instruments`, { name: `σ used ${Date.now()}`, distanceMm: 2, distancePpm: 2, directionArcsec: 2, zenithArcsec: 3, centeringInstrumentMm: 1, centeringTargetMm: 1, levellingMmPerSqrtKm: 1 })
    expect(prof.status).toBe(201)
    const p = await freshProject(chief, 'Sigma used')
    const text = `${HEADER}\ncontrol,A,,,1000 1000,m,,,,,,\ncontrol,B,,,1000 1100,m,,,,,,\ncontrol,C,,,1200 1000,m,,,,,,\nangle,A,B,C,90,deg,,,,,,\nangle,A,B,Z,45,deg,,,,,,\n`
    const up = await chief.post(`${base(p)}/observation-sets`, fileForm('angles.csv', text, { instrumentProfileId: String(prof.body.id) }))
    expect(up.status).toBe(201)
    const rows = (await chief.get(`${base(p)}/observations?kind=angle&sort=line`)).body.rows
    // σ² = 2σ_dir² + σ_ct²(1/d_b² + 1/d_f²) + σ_ci²·d_bf²/(d_b²d_f²) with d_b = 100, d_f = 200, d_bf = √(200² + 100²) (Ghilani 2017, ch. 6, from memory)
    const rad = Math.PI / (180 * 3600)
    const expected = Math.sqrt(2 * (2 * rad) ** 2 + 0.001 ** 2 * (1 / 100 ** 2 + 1 / 200 ** 2) + (0.001 ** 2 * (200 ** 2 + 100 ** 2)) / (100 ** 2 * 200 ** 2))
    expect(rows[0].sigmaUsed).toBeCloseTo(expected, 12)
    expect(rows[0].sigmaUsed / (Math.SQRT2 * 2 * rad)).toBeGreaterThan(1.1)
    // Z has no stored position yet: no length, so no σ is claimed
    expect(rows[1]).toMatchObject({ sigmaUsed: null, sigmaSource: 'none' })
  })
})

describe('σ used in the project\'s units', () => {
  // 3.048 mm is exactly one hundredth of an international foot (0.3048 m, Federal Register 24 FR 5348, 1959);
  // 3.24″ is 10 cc (1 gon = 3240″ = 10 000 cc, ISO 80000-3)
  const text = `${HEADER}\nslope_distance,A,,B,100.0,m,3.048,,,,,\ndirection,A,,B,10 00 00,dms,3.24,,,,,\n`
  it('a feet project in hundredths and gon shows 1.00 0.01 ft and 10.0 cc; a metre project 3.0 mm and 3.2″', async () => {
    const ft = await freshProject(chief, 'Sigma feet', 'ft')
    const patched = await chief.patch(base(ft), { precisionUnit: 'hundredth_ft', angleFormat: 'gon' })
    expect(patched.status, JSON.stringify(patched.body)).toBe(200)
    expect((await chief.post(`${base(ft)}/observation-sets`, fileForm('s.csv', text))).status).toBe(201)
    const ftRows = (await chief.get(`${base(ft)}/observations?sort=line`)).body.rows
    expect(ftRows.map((o: { sigmaDisplay: string }) => o.sigmaDisplay)).toEqual(['1.00 0.01 ft', '10.0 cc'])

    const m = await freshProject(chief, 'Sigma metres')
    expect((await chief.post(`${base(m)}/observation-sets`, fileForm('s.csv', text))).status).toBe(201)
    const mRows = (await chief.get(`${base(m)}/observations?sort=line`)).body.rows
    expect(mRows.map((o: { sigmaDisplay: string }) => o.sigmaDisplay)).toEqual(['3.0 mm', '3.2″'])
  })
})
