// Client deliverables from a signed coordinate list: GeoJSON (RFC 7946, checked
// with @placemarkio/check-geojson, positions against proj4 directly), LandXML
// (read back with our LandXML 1.2 reader), PDF (text extracted with unpdf) and
// CSV (parsed back with papaparse). Stations are invented.
import { check } from '@placemarkio/check-geojson'
import Papa from 'papaparse'
import proj4 from 'proj4'
import { extractText, getDocumentProxy } from 'unpdf'
import { describe, expect, it } from 'vitest'
import { findCrs } from '../../shared/crs'
import { readLandXml } from '../../server/engine/io/landxml'
import { buildCsv, buildDeliverables, buildGeoJson, buildLandXml, buildPdf, CAUTION, networkLegend, networkLineOps, pdfSafe } from '../../server/services/deliverables'
import { CHART } from '../../shared/palette'
import type { DeliverableInput, Units } from '../../server/services/deliverables'
import type { SignedStation } from '../../server/services/signoffs'
import { sha256Hex } from '../../server/services/passwords'

const st = (name: string, east: number, north: number, height: number | null): SignedStation => ({
  name, kind: 'new', fixed: false, east, north, height,
  sdEast: 0.00213, sdNorth: 0.00187, sdHeight: height === null ? null : 0.00301,
  semiMajor: 0.00231, semiMinor: 0.00162, azimuthDeg: 37.125, semiMajor95: 0.00566, semiMinor95: 0.00397,
})

function input(crs: string, units: Units, stations: SignedStation[]): DeliverableInput {
  const entry = crs === 'local' ? null : findCrs(crs)!
  return {
    firmName: 'Larchmere Survey Co.',
    project: { id: 7, name: 'Fenwick Mill culvert control', crs, crsName: entry?.name ?? 'Local plane system', crsDefinition: entry?.proj4 ?? null, units },
    release: { id: 12, publishedAt: new Date('2026-05-04T10:20:30Z') },
    signoff: {
      id: 3, signerName: 'Tomasz Reyne', licenceNumber: 'LS-DEMO-0417', licenceJurisdiction: 'Demo State Board (invented)',
      statement: 'I have reviewed the adjustment and certify these control points.', signedAt: new Date('2026-05-03T09:00:00Z'),
      sha256: 'a'.repeat(64), inputHash: 'b'.repeat(64), stations,
      accuracyCheck: {
        profile: { id: 1, name: 'ALTA/NSPS', kind: 'relative_ppm', params: { mm: 20, ppm: 50 }, source: 'ALTA/NSPS 2021 3.E', rule: 'relative precision at 95 % ≤ 20 mm + 50 ppm of the distance' },
        items: [{ type: 'pair', from: 'FM01', to: 'FM10', distance: 183.2, value: 0.0061, allowable: 0.02916, passes: true }],
        passed: true, failing: [], note: '1 of 1 pairs pass.',
      },
    },
    run: { number: 4, finishedAt: '2026-05-02T08:00:00.000Z', inputHash: 'b'.repeat(64), sigma0: 1.042, dof: 12, globalTest: { statistic: 13.03, lower: 4.40, upper: 23.34, passed: true }, counts: { n: 30, u: 18, r: 12 }, confidence: 0.95 },
  }
}

// UTM zone 33N positions (invented, metres) and a US-survey-foot state plane project.
const utm = input('EPSG:32633', 'm', [st('FM10', 455123.4567, 5412345.6789, 212.3456), st('FM11', 455301.0012, 5412398.1234, null)])
const spcs = input('EPSG:2229', 'usft', [st('FM20', 6478123.4567 * 1200 / 3937, 1845678.9012 * 1200 / 3937, 101.25)])
const local = input('local', 'm', [st('FM30', 1500.1234, 5500.5678, 52.3)])
// invented names with Polish, Croatian and Danish letters (Latin Extended and Latin-1)
const diacritics = input('local', 'm', [st('Łódź-1', 1500, 5500, 52.3), st('Čakovec', 1600, 5550, 52.9), st('Ørsted', 1550, 5620, 53.1)])

describe('GeoJSON (RFC 7946)', () => {
  it('validates and every position equals proj4 of the grid coordinates to 1e-9°', () => {
    for (const inp of [utm, spcs]) {
      const text = buildGeoJson(inp)!
      const fc = check(text) as { type: string; features: { geometry: { coordinates: number[] }; properties: Record<string, unknown> }[] }
      expect(fc.type).toBe('FeatureCollection')
      const toCrsUnit = inp.project.units === 'usft' ? 3937 / 1200 : 1
      inp.signoff.stations.forEach((s, i) => {
        const [lon, lat] = proj4(inp.project.crsDefinition!, 'EPSG:4326', [s.east * toCrsUnit, s.north * toCrsUnit])
        const [glon, glat] = fc.features[i]!.geometry.coordinates
        expect(Math.abs(glon! - lon!)).toBeLessThan(1e-9)
        expect(Math.abs(glat! - lat!)).toBeLessThan(1e-9)
        expect(fc.features[i]!.properties).toMatchObject({ name: s.name, kind: 'new', sd_east_m: s.sdEast, ellipse95_major_m: s.semiMajor95 })
      })
    }
  })

  it('puts UTM 33N points near 15° E (zone central meridian) and the California zone 5 point near 118° W', () => {
    const a = JSON.parse(buildGeoJson(utm)!).features[0].geometry.coordinates
    expect(a[0]).toBeGreaterThan(14) ; expect(a[0]).toBeLessThan(15)
    const b = JSON.parse(buildGeoJson(spcs)!).features[0].geometry.coordinates
    expect(Math.abs(b[0] + 118)).toBeLessThan(1)
  })

  it('is not offered for a local plane system', () => {
    expect(buildGeoJson(local)).toBeNull()
  })
})

describe('LandXML 1.2', () => {
  it('names Tiepoint as the application and the firm as the one that released the file (regression: the firm was the application)', () => {
    const xml = buildLandXml(utm)
    expect(xml).toMatch(/<Application name="Tiepoint" manufacturer="Tiepoint"/)
    expect(xml).toContain('Signed control released by Larchmere Survey Co.')
  })

  it('round-trips through the LandXML reader as control points in metres', () => {
    for (const inp of [utm, spcs, local]) {
      const read = readLandXml(buildLandXml(inp))
      expect(read.ok, JSON.stringify(read)).toBe(true)
      if (!read.ok) continue
      expect(read.controls.map((c) => c.station)).toEqual(inp.signoff.stations.map((s) => s.name))
      inp.signoff.stations.forEach((s, i) => {
        const c = read.controls[i]!
        // four decimals of the file's unit
        const tol = 0.00006 * (inp.project.units === 'm' ? 1 : 1200 / 3937)
        expect(Math.abs(c.east! - s.east)).toBeLessThan(tol)
        expect(Math.abs(c.north! - s.north)).toBeLessThan(tol)
        if (s.height === null) expect(c.height).toBeNull()
        else expect(Math.abs(c.height! - s.height)).toBeLessThan(tol)
      })
    }
  })

  it('names the coordinate system', () => {
    expect(buildLandXml(utm)).toMatch(/<CoordinateSystem name="WGS 84 \/ UTM zone 33N" epsgCode="32633"/)
    expect(buildLandXml(spcs)).toMatch(/linearUnit="USSurveyFoot"/)
  })
})

describe('CSV', () => {
  it('round-trips through papaparse with units, CRS and precision columns', () => {
    const text = buildCsv(spcs)
    expect(text).toMatch(/# CRS: EPSG:2229/)
    expect(text).toMatch(/units: US survey ft/)
    const parsed = Papa.parse<Record<string, string>>(text, { header: true, comments: '#', skipEmptyLines: true })
    expect(parsed.errors).toEqual([])
    expect(parsed.meta.fields).toEqual(['name', 'kind', 'east_usft', 'north_usft', 'height_usft', 'sd_east_mm', 'sd_north_mm', 'sd_height_mm', 'ellipse95_major_mm', 'ellipse95_minor_mm', 'ellipse_azimuth_deg'])
    expect(text).toMatch(/precisions in millimetres \(mm\)/)
    const row = parsed.data[0]!
    expect(row.name).toBe('FM20')
    expect(Number(row.east_usft)).toBeCloseTo(6478123.4567, 4)
    expect(Number(row.north_usft)).toBeCloseTo(1845678.9012, 4)
    expect(row.ellipse95_major_mm).toBe('5.66')
  })

  it('a feet project set to hundredths writes its precisions in hundredths of its foot, and says so', () => {
    const text = buildCsv({ ...spcs, project: { ...spcs.project, precisionUnit: 'hundredth_ft' } })
    expect(text).toMatch(/precisions in hundredths of a US survey foot \(0\.01 US ft\)/)
    const parsed = Papa.parse<Record<string, string>>(text, { header: true, comments: '#', skipEmptyLines: true })
    expect(parsed.meta.fields).toContain('ellipse95_major_cusft')
    expect(parsed.meta.fields).not.toContain('ellipse95_major_mm')
    // 1 US survey foot = 1200/3937 m (Federal Register 24 FR 5348, 1959): back to metres
    expect(Number(parsed.data[0]!.ellipse95_major_cusft) / 100 * 1200 / 3937).toBeCloseTo(0.00566, 5)
  })
})

describe('PDF report', () => {
  it('states the precision unit of a feet project set to hundredths in the units line and table headers', async () => {
    const pdf = await buildPdf({ ...spcs, project: { ...spcs.project, precisionUnit: 'hundredth_ft' } })
    const { text } = await extractText(await getDocumentProxy(new Uint8Array(pdf)), { mergePages: true })
    const flat = text.replace(/\s+/g, ' ')
    expect(flat).toContain('precisions in hundredths of a US survey foot (0.01 US ft)')
    // 0.00566 m = 1.86 hundredths of a US survey foot (1 US ft = 1200/3937 m)
    expect(flat).toContain('1.86')
    expect(flat).not.toContain('5.7')
  })

  it('holds every signed coordinate, the sign-off hash and the caution', async () => {
    const pdf = await buildPdf(utm)
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
    const { text } = await extractText(await getDocumentProxy(new Uint8Array(pdf)), { mergePages: true })
    for (const s of utm.signoff.stations) {
      expect(text).toContain(s.name)
      expect(text).toContain(s.east.toFixed(4))
      expect(text).toContain(s.north.toFixed(4))
      if (s.height !== null) expect(text).toContain(s.height.toFixed(4))
    }
    expect(text).toContain(utm.signoff.sha256)
    expect(text).toContain('LS-DEMO-0417')
    expect(text.replace(/\s+/g, ' ')).toContain('checked against local regulations and licensed practice')
    expect(CAUTION).toMatch(/responsibility of the signing licensed surveyor/)
  })

  it('prints σ, Greek and names with diacritics as written; only signs no shipped font carries go into words (regression: σ spelled "sd")', async () => {
    expect(pdfSafe('relative precision at 95 % ≤ 20 mm; σ of unit weight')).toBe('relative precision at 95 % at most 20 mm; σ of unit weight')
    const pdf = await buildPdf(diacritics)
    const { text } = await extractText(await getDocumentProxy(new Uint8Array(pdf)), { mergePages: true })
    expect(text).toContain('Łódź')
    expect(text).toContain('Čakovec')
    expect(text).toContain('Ørsted')
    expect(text).toMatch(/σE \(mm\)/)
    expect(text).toContain('Global test (χ²)')
    expect(text).not.toMatch(/[≤≥]/)
    expect(text).not.toMatch(/\bsd\b/)
  })

  it('numbers every page and puts the caution in every footer', async () => {
    const many = input('local', 'm', Array.from({ length: 120 }, (_, i) => st(`P${i + 1}`, 1000 + i * 7.5, 5000 + (i % 11) * 9.1, 50 + i / 10)))
    const doc = await getDocumentProxy(new Uint8Array(await buildPdf(many)))
    expect(doc.numPages).toBeGreaterThan(2)
    const { text } = await extractText(doc, { mergePages: false })
    text.forEach((page, i) => {
      expect(page).toContain(`Page ${i + 1} of ${doc.numPages}`)
      expect(page.replace(/\s+/g, ' ')).toContain('checked against local regulations and licensed practice')
    })
  })

  it('marks held points, states datum and scaling, and lists what the signer acknowledged', async () => {
    const held = { ...st('CP1', 1000, 5000, 50), fixed: true, kind: 'control' as const, sdEast: 0, sdNorth: 0, semiMajor95: null, semiMinor95: null, azimuthDeg: null }
    const inp = input('local', 'm', [held, st('FM31', 1100, 5100, 51)])
    inp.run = { ...inp.run, datum: 'as-stored', scaling: 'a-posteriori', globalTest: { statistic: 40.1, lower: 4.4, upper: 23.34, passed: false } }
    inp.signoff.accuracyCheck = { ...inp.signoff.accuracyCheck, acknowledgedFailedTests: ['failed its global test', 'still uses 1 flagged observation'] } as typeof inp.signoff.accuracyCheck
    inp.flagged = [{ line: 41, kind: 'slope_distance', at: 'FM31', from: null, to: 'CP1', w: 5.12 }]
    inp.network = { stations: [{ name: 'CP1', east: 1000, north: 5000, fixed: true, semiMajor95: null, semiMinor95: null, azimuthDeg: null }, { name: 'FM31', east: 1100, north: 5100, fixed: false, semiMajor95: 0.004, semiMinor95: 0.002, azimuthDeg: 30 }], lines: [['CP1', 'FM31']] }
    const { text } = await extractText(await getDocumentProxy(new Uint8Array(await buildPdf(inp))), { mergePages: true })
    const flat = text.replace(/\s+/g, ' ')
    expect(flat).toMatch(/CP1 held/)
    expect(flat).toMatch(/FM31 new/)
    expect(flat).toContain('Datum: control held as stored')
    expect(flat).toContain('Precision scaling: precisions scaled by the a-posteriori variance factor')
    expect(flat).toContain('The signer acknowledged that run 4 failed its global test and still uses 1 flagged observation')
    expect(flat).toMatch(/41 slope distance FM31 to CP1 5\.12/)
    // the network drawing: its scale bar and the ellipse exaggeration are written beside it
    expect(flat).toMatch(/error ellipses at 95 % confidence, drawn [\d,]+ × true size/)
    expect(flat).toMatch(/\b(10|20|50) m\b/)
  })

  it('embeds IBM Plex Sans', async () => {
    const pdf = await buildPdf(local)
    expect(pdf.toString('latin1')).toMatch(/IBMPlexSans/)
  })
})

describe('the PDF network drawing marks GNSS vectors apart', () => {
  const stations = [
    { name: 'W01', east: 1000, north: 5000, fixed: true, semiMajor95: null, semiMinor95: null, azimuthDeg: null },
    { name: 'W02', east: 1400, north: 5300, fixed: false, semiMajor95: 0.006, semiMinor95: 0.004, azimuthDeg: 20 },
    { name: 'T1', east: 1100, north: 5400, fixed: false, semiMajor95: 0.005, semiMinor95: 0.003, azimuthDeg: 80 },
  ]
  // W01–T1 is a distance only, W01–W02 a vector only, W02–T1 both
  const net = { stations, lines: [['W01', 'T1'], ['T1', 'W02']] as [string, string][], vectors: [['W01', 'W02'], ['T1', 'W02']] as [string, string][] }

  it('a vector is stroked dashed in the map\'s vector violet; a distance line solid and not violet', () => {
    const ops = networkLineOps(net)
    const distance = ops.find((o) => o.a === 'W01' && o.b === 'T1')!
    const vector = ops.find((o) => o.a === 'W01' && o.b === 'W02')!
    expect(distance.kind).toBe('observed')
    expect(distance.style.dash).toBeNull()
    expect(distance.style.color).not.toBe(CHART.vector)
    expect(vector.kind).toBe('vector')
    expect(vector.style.color).toBe(CHART.vector)
    expect(vector.style.dash!.length).toBeGreaterThan(0)
    expect(vector.style.dash!.space).toBeGreaterThan(0)
  })
  it('a pair with both is stroked twice, the vector last so its dashes stay visible', () => {
    const both = networkLineOps(net).filter((o) => o.a === 'T1' && o.b === 'W02').map((o) => o.kind)
    expect(both).toEqual(['observed', 'vector'])
  })
  it('the legend names vectors (with their count) only when the network has some', () => {
    expect(networkLegend(net, 500)).toContain('dashed violet: GNSS vectors (2)')
    expect(networkLegend({ stations, lines: net.lines }, 500)).not.toMatch(/GNSS/)
    expect(networkLegend({ stations, lines: net.lines, vectors: [] }, 0)).toBe('triangles: held control · dots: adjusted · grid north up')
  })
  it('the PDF prints the vector key and legend beside the drawing', async () => {
    const inp = input('local', 'm', [st('W02', 1400, 5300, 10)])
    inp.network = net
    const { text } = await extractText(await getDocumentProxy(new Uint8Array(await buildPdf(inp))), { mergePages: true })
    const flat = text.replace(/\s+/g, ' ')
    expect(flat).toContain('GNSS vector')
    expect(flat).toContain('dashed violet: GNSS vectors (2)')
  })
})

describe('order of the signed stations', () => {
  // the sign-off stores its list in code-unit order (KF10 before KF2); every file lists it naturally
  const unordered = input('local', 'm', [st('KF10', 1000, 5000, 50), st('KF2', 1010, 5010, 51), st('KF1', 1020, 5020, 52)])
  it('CSV, LandXML and PDF list KF1, KF2, KF10 (natural order)', async () => {
    const csv = Papa.parse<string[]>(buildCsv(unordered).split('\r\n').filter((l) => l && !l.startsWith('#')).join('\n')).data
    expect(csv.slice(1).map((r) => r[0])).toEqual(['KF1', 'KF2', 'KF10'])
    expect([...buildLandXml(unordered).matchAll(/<CgPoint\s[^>]*\bname="([^"]+)"/g)].map((m) => m[1])).toEqual(['KF1', 'KF2', 'KF10'])
    const { text } = await extractText(await getDocumentProxy(new Uint8Array(await buildPdf(unordered))), { mergePages: true })
    const flat = text.replace(/\s+/g, ' ')
    expect(flat.indexOf('KF2 new')).toBeGreaterThan(flat.indexOf('KF1 new'))
    expect(flat.indexOf('KF10 new')).toBeGreaterThan(flat.indexOf('KF2 new'))
    // the σ̂0 line is printed (its hat is drawn, not a character)
    expect(flat).toContain('unit weight σ0: 1.042')
  })
})

describe('all deliverables', () => {
  it('records the SHA-256 of each file and leaves GeoJSON out for a local project', async () => {
    const files = await buildDeliverables(local)
    expect(files.map((f) => f.format)).toEqual(['csv', 'landxml', 'pdf'])
    for (const f of files) expect(f.sha256).toBe(sha256Hex(f.content))
    expect((await buildDeliverables(utm)).map((f) => f.format)).toEqual(['csv', 'geojson', 'landxml', 'pdf'])
  })
})
