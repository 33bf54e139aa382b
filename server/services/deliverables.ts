// Client deliverables of a release, made from the SIGNED data only (the
// stations stored in the sign-off, never the live run): CSV, GeoJSON
// (RFC 7946, WGS 84 longitude/latitude via proj4), LandXML 1.2 CgPoints and a
// PDF report. Pure functions of their input, so tests can check each format.
// Stored coordinates are metres; files use the project's units.
import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import Papa from 'papaparse'
import { safeRows } from './csv'
import proj4 from 'proj4'
import PDFDocument from 'pdfkit'
import { XMLBuilder } from 'fast-xml-parser'
import { METRES_PER } from '../engine/io/units'
import type { AccuracyCheck } from './accuracy-check'
import type { RunSummaryDto, SignedStation } from './signoffs'
import { sha256Hex } from './passwords'

export type Units = 'm' | 'ft' | 'usft'
export type DeliverableFormat = 'csv' | 'geojson' | 'landxml' | 'pdf'

export interface DeliverableInput {
  firmName: string
  project: { id: number; name: string; crs: string; crsName: string; crsDefinition: string | null; units: Units }
  release: { id: number; publishedAt: Date }
  signoff: {
    id: number
    signerName: string
    licenceNumber: string
    licenceJurisdiction: string
    statement: string
    signedAt: Date
    sha256: string
    inputHash: string
    stations: SignedStation[]
    accuracyCheck: AccuracyCheck
  }
  run: RunSummaryDto
}

export interface DeliverableFile {
  format: DeliverableFormat
  fileName: string
  contentType: string
  content: Buffer
  sha256: string
}

// Foot definitions and their sources live with the unit helpers (server/engine/io/units.ts).
export const METRES_PER_UNIT: Readonly<Record<Units, number>> = METRES_PER
export const UNIT_LABEL: Record<Units, string> = { m: 'm', ft: 'ft', usft: 'US survey ft' }
const DECIMALS = 4

export const CAUTION = 'These coordinates are released for use under the responsibility of the signing licensed surveyor. '
  + 'They must be checked against local regulations and licensed practice before use.'

const toUnits = (metres: number | null, units: Units) => (metres === null ? null : metres / METRES_PER_UNIT[units])
const fmt = (v: number | null, d = DECIMALS) => (v === null ? '' : v.toFixed(d))

/**
 * The embedded IBM Plex Sans carries the Latin glyphs only: write the few
 * mathematical signs our texts use in words so nothing prints as a blank box.
 */
export function pdfSafe(text: string): string {
  return text.replace(/≤/g, 'at most').replace(/≥/g, 'at least').replace(/σ/g, 'sd')
}

export function fileBase(input: DeliverableInput): string {
  const slug = input.project.name.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '').slice(0, 40) || 'project'
  return `${slug}-release-${input.release.id}`
}

// ── CSV ────────────────────────────────────────────────────────────────────

/** Header comment lines (`#`), then one row per signed station, values in the project's units. */
export function buildCsv(input: DeliverableInput): string {
  const u = input.project.units
  const rows = input.signoff.stations.map((s) => ({
    name: s.name,
    kind: s.kind,
    [`east_${u}`]: fmt(toUnits(s.east, u)),
    [`north_${u}`]: fmt(toUnits(s.north, u)),
    [`height_${u}`]: fmt(toUnits(s.height, u)),
    [`sd_east_${u}`]: fmt(toUnits(s.sdEast, u)),
    [`sd_north_${u}`]: fmt(toUnits(s.sdNorth, u)),
    [`sd_height_${u}`]: fmt(toUnits(s.sdHeight, u)),
    [`ellipse95_major_${u}`]: fmt(toUnits(s.semiMajor95, u)),
    [`ellipse95_minor_${u}`]: fmt(toUnits(s.semiMinor95, u)),
    ellipse_azimuth_deg: fmt(s.azimuthDeg, 3),
  }))
  const header = [
    `# ${input.project.name}: signed control coordinates, release ${input.release.id}`,
    `# CRS: ${input.project.crs} (${input.project.crsName}); units: ${UNIT_LABEL[u]}; precisions: standard deviations (1 sigma) and 95 % error ellipses`,
    `# Signed by ${input.signoff.signerName}, licence ${input.signoff.licenceNumber} (${input.signoff.licenceJurisdiction}), ${input.signoff.signedAt.toISOString()}; sign-off SHA-256 ${input.signoff.sha256}`,
    `# ${CAUTION}`,
  ]
  return `${header.join('\r\n')}\r\n${Papa.unparse(safeRows(rows), { newline: '\r\n' })}\r\n`
}

// ── GeoJSON ────────────────────────────────────────────────────────────────

/** proj4 definitions state their own linear unit; stored metres are converted to it first. */
export function metresPerCrsUnit(definition: string): number {
  const toMeter = /\+to_meter=([0-9.eE+-]+)/.exec(definition)
  if (toMeter) return Number(toMeter[1])
  const unit = /\+units=([\w-]+)/.exec(definition)?.[1] ?? 'm'
  if (unit === 'us-ft') return METRES_PER.usft
  if (unit === 'ft') return METRES_PER.ft
  return 1
}

/** WGS 84 longitude and latitude (degrees) of a grid position given in metres. */
export function toWgs84(definition: string, eastM: number, northM: number): [number, number] {
  const k = metresPerCrsUnit(definition)
  const [lon, lat] = proj4(definition, 'WGS84', [eastM / k, northM / k]) as [number, number]
  return [lon, lat]
}

/** RFC 7946 FeatureCollection, or null for a local plane system (no link to the earth). */
export function buildGeoJson(input: DeliverableInput): string | null {
  const def = input.project.crsDefinition
  if (input.project.crs === 'local' || !def) return null
  const features = input.signoff.stations.map((s) => {
    const [lon, lat] = toWgs84(def, s.east, s.north)
    return {
      type: 'Feature' as const,
      id: s.name,
      // RFC 7946 §3.1.1: longitude, latitude in WGS 84; the local height is not an
      // ellipsoidal height, so it goes in the properties, not the third position.
      geometry: { type: 'Point' as const, coordinates: [Number(lon.toFixed(10)), Number(lat.toFixed(10))] },
      properties: {
        name: s.name,
        kind: s.kind,
        grid_crs: input.project.crs,
        east_m: s.east,
        north_m: s.north,
        height_m: s.height,
        sd_east_m: s.sdEast,
        sd_north_m: s.sdNorth,
        sd_height_m: s.sdHeight,
        ellipse95_major_m: s.semiMajor95,
        ellipse95_minor_m: s.semiMinor95,
        ellipse_azimuth_deg: s.azimuthDeg,
      },
    }
  })
  return JSON.stringify({
    type: 'FeatureCollection',
    // Foreign members (RFC 7946 §6.1): what this file is and who signed it.
    tiepoint: {
      project: input.project.name,
      release: input.release.id,
      signoffSha256: input.signoff.sha256,
      signedBy: `${input.signoff.signerName}, licence ${input.signoff.licenceNumber} (${input.signoff.licenceJurisdiction})`,
      caution: CAUTION,
    },
    features,
  }, null, 2)
}

// ── LandXML 1.2 ────────────────────────────────────────────────────────────

const LANDXML_UNITS: Record<Units, { system: 'Metric' | 'Imperial'; linear: string; area: string; volume: string }> = {
  m: { system: 'Metric', linear: 'meter', area: 'squareMeter', volume: 'cubicMeter' },
  ft: { system: 'Imperial', linear: 'foot', area: 'squareFoot', volume: 'cubicFeet' },
  usft: { system: 'Imperial', linear: 'USSurveyFoot', area: 'squareFoot', volume: 'cubicFeet' },
}

/** LandXML 1.2 with Units, CoordinateSystem and the signed points as control CgPoints ("northing easting elevation"). */
export function buildLandXml(input: DeliverableInput): string {
  const u = input.project.units
  const lu = LANDXML_UNITS[u]
  const at = input.release.publishedAt.toISOString()
  const epsg = /^EPSG:(\d+)$/i.exec(input.project.crs)?.[1]
  const doc = {
    '?xml': { '@_version': '1.0', '@_encoding': 'UTF-8' },
    LandXML: {
      '@_xmlns': 'http://www.landxml.org/schema/LandXML-1.2',
      '@_version': '1.2',
      '@_date': at.slice(0, 10),
      '@_time': at.slice(11, 19),
      Units: {
        [lu.system]: { '@_linearUnit': lu.linear, '@_areaUnit': lu.area, '@_volumeUnit': lu.volume, '@_angularUnit': 'decimal degrees', '@_directionUnit': 'decimal degrees' },
      },
      CoordinateSystem: {
        '@_name': input.project.crsName,
        ...(epsg ? { '@_epsgCode': epsg } : {}),
        '@_desc': input.project.crs === 'local' ? 'Local plane coordinate system of the project (no geodetic datum)' : input.project.crs,
      },
      Project: { '@_name': input.project.name, '@_desc': `Signed control, release ${input.release.id}; sign-off SHA-256 ${input.signoff.sha256}. ${CAUTION}` },
      Application: { '@_name': 'Tiepoint', '@_manufacturer': input.firmName, '@_version': '1' },
      CgPoints: {
        '@_name': `Sign-off ${input.signoff.id} by ${input.signoff.signerName}`,
        CgPoint: input.signoff.stations.map((s) => ({
          '@_name': s.name,
          '@_pntSurv': 'control',
          '@_desc': `${s.kind}; sd E/N/H ${[s.sdEast, s.sdNorth, s.sdHeight].map((v) => fmt(toUnits(v, u))).join('/')} ${u}`,
          '#text': [toUnits(s.north, u), toUnits(s.east, u), ...(s.height === null ? [] : [toUnits(s.height, u)])].map((v) => fmt(v)).join(' '),
        })),
      },
    },
  }
  const builder = new XMLBuilder({ ignoreAttributes: false, attributeNamePrefix: '@_', format: true, suppressEmptyNode: true })
  return builder.build(doc) as string
}

// ── PDF ────────────────────────────────────────────────────────────────────

const FONT_FILES = { regular: 'ibm-plex-sans-latin-400-normal.woff', bold: 'ibm-plex-sans-latin-600-normal.woff' }

/**
 * IBM Plex Sans from @fontsource (shipped with the app). pdfkit reads the WOFF
 * files through fontkit, so no TTF is needed. Looked up from the working
 * directory because the built server does not carry font files in its bundle.
 */
function fontBuffer(file: string): Buffer {
  const dirs = [process.env.TIEPOINT_FONT_DIR, join(process.cwd(), 'node_modules/@fontsource/ibm-plex-sans/files')].filter(Boolean) as string[]
  for (const dir of dirs) {
    const p = join(dir, file)
    if (existsSync(p)) return readFileSync(p)
  }
  throw new Error(`IBM Plex Sans (${file}) was not found; install node_modules or set TIEPOINT_FONT_DIR`)
}

interface Column { title: string; width: number; align?: 'left' | 'right' }

export async function buildPdf(input: DeliverableInput): Promise<Buffer> {
  const regular = fontBuffer(FONT_FILES.regular)
  const bold = fontBuffer(FONT_FILES.bold)
  const doc = new PDFDocument({
    size: 'A4', margin: 40, font: regular as unknown as string,
    info: { Title: `${input.project.name}: release ${input.release.id}`, Author: input.firmName, Creator: 'Tiepoint' },
  })
  doc.registerFont('body', regular)
  doc.registerFont('bold', bold)
  const chunks: Buffer[] = []
  doc.on('data', (c: Buffer) => chunks.push(c))
  const ended = new Promise<void>((resolve, reject) => { doc.on('end', () => resolve()); doc.on('error', reject) })

  const u = input.project.units
  const left = doc.page.margins.left
  const width = doc.page.width - doc.page.margins.left - doc.page.margins.right
  const bottom = () => doc.page.height - doc.page.margins.bottom
  const heading = (t: string) => { doc.moveDown(0.8).font('bold').fontSize(12).fillColor('#1f5d5d').text(pdfSafe(t), left).fillColor('#0f172a').font('body').fontSize(9) }
  const line = (label: string, value: string) => { doc.font('bold').fontSize(9).text(`${pdfSafe(label)}: `, left, undefined, { continued: true }).font('body').text(pdfSafe(value)) }

  const table = (cols: Column[], rows: string[][]) => {
    const rowH = 13
    const drawHeader = () => {
      let x = left
      const y = doc.y
      doc.font('bold').fontSize(7.5)
      for (const c of cols) { doc.text(c.title, x, y, { width: c.width - 4, align: c.align ?? 'right', lineBreak: false }); x += c.width }
      doc.moveTo(left, y + rowH - 2).lineTo(left + width, y + rowH - 2).strokeColor('#cbd5e1').stroke()
      doc.y = y + rowH
      doc.font('body').fontSize(8)
    }
    drawHeader()
    for (const r of rows) {
      if (doc.y + rowH > bottom()) { doc.addPage(); drawHeader() }
      let x = left
      const y = doc.y
      r.forEach((cell, i) => { doc.text(pdfSafe(cell), x, y, { width: cols[i]!.width - 4, align: cols[i]!.align ?? 'right', lineBreak: false }); x += cols[i]!.width })
      doc.y = y + rowH
    }
    doc.x = left
  }

  doc.font('bold').fontSize(16).text(input.project.name)
  doc.font('body').fontSize(10).fillColor('#475569').text(`Signed control coordinates — release ${input.release.id} of ${input.firmName}, published ${input.release.publishedAt.toISOString().slice(0, 10)}`)
  doc.fillColor('#0f172a')

  heading('Coordinate system')
  line('CRS', `${input.project.crs} — ${input.project.crsName}`)
  line('Units', `${UNIT_LABEL[u]}; standard deviations are 1 sigma, ellipses at 95 % confidence`)

  heading('Adjustment')
  const r = input.run
  line('Run', `${r.number}${r.finishedAt ? `, finished ${r.finishedAt.slice(0, 19).replace('T', ' ')} UTC` : ''}`)
  if (r.counts) line('Observations, unknowns, redundancy', `${r.counts.n}, ${r.counts.u}, ${r.counts.r}`)
  if (r.sigma0 !== null) line('A-posteriori standard deviation of unit weight', r.sigma0.toFixed(3))
  if (r.globalTest) {
    const g = r.globalTest
    line('Global test (chi-square)', `${g.passed === null ? 'not applicable (no redundancy)' : g.passed ? 'passed' : 'failed'}: statistic ${g.statistic.toFixed(2)}, acceptance interval ${g.lower.toFixed(2)} to ${g.upper.toFixed(2)}`)
  }
  line('Input hash', r.inputHash)

  heading('Signed coordinates')
  const pu = u === 'm' ? 'mm' : u
  const prec = (v: number | null) => (v === null ? '—' : u === 'm' ? (v * 1000).toFixed(1) : fmt(toUnits(v, u)))
  table([
    { title: 'Station', width: 62, align: 'left' },
    { title: `East (${u})`, width: 66 }, { title: `North (${u})`, width: 66 }, { title: `Height (${u})`, width: 52 },
    { title: `sd E (${pu})`, width: 42 }, { title: `sd N (${pu})`, width: 42 }, { title: `sd H (${pu})`, width: 42 },
    { title: `A95 (${pu})`, width: 46 }, { title: `B95 (${pu})`, width: 46 }, { title: 'az (deg)', width: 51 },
  ], input.signoff.stations.map((s) => [
    s.name, fmt(toUnits(s.east, u)), fmt(toUnits(s.north, u)), s.height === null ? '—' : fmt(toUnits(s.height, u)),
    prec(s.sdEast), prec(s.sdNorth), prec(s.sdHeight), prec(s.semiMajor95), prec(s.semiMinor95), s.azimuthDeg === null ? '—' : s.azimuthDeg.toFixed(1),
  ]))
  doc.moveDown(0.3).fontSize(7.5).fillColor('#475569')
    .text('sd: standard deviation (1 sigma). A95, B95: semi-axes of the absolute error ellipse at 95 % confidence; az: azimuth of A95 clockwise from grid north.', left, undefined, { width })
    .fillColor('#0f172a').fontSize(9)

  heading('Accuracy check')
  const c = input.signoff.accuracyCheck
  if (c.profile) {
    line('Tolerance', `${c.profile.name}: ${c.profile.rule}`)
    line('Source', c.profile.source)
  }
  doc.text(pdfSafe(c.note), left)
  if (c.items.length) {
    doc.moveDown(0.3)
    table([
      { title: 'From', width: 80, align: 'left' }, { title: 'To', width: 80, align: 'left' }, { title: `Distance (${u})`, width: 80 },
      { title: `Value (${pu})`, width: 80 }, { title: `Allowable (${pu})`, width: 90 }, { title: 'Result', width: 85 },
    ], c.items.map((i) => [i.from, i.to ?? '—', i.distance === null ? '—' : fmt(toUnits(i.distance, u), 3), prec(i.value), prec(i.allowable), i.passes ? 'pass' : 'FAIL']))
  }

  heading('Sign-off')
  line('Signed by', `${input.signoff.signerName}, licence ${input.signoff.licenceNumber} (${input.signoff.licenceJurisdiction})`)
  line('Signed at', `${input.signoff.signedAt.toISOString().slice(0, 19).replace('T', ' ')} UTC`)
  line('Statement', input.signoff.statement)
  line('SHA-256 of the signed list and inputs', input.signoff.sha256)

  heading('Caution')
  doc.font('body').fontSize(9).text(CAUTION, left, undefined, { width })

  doc.end()
  await ended
  return Buffer.concat(chunks)
}

// ── all formats ────────────────────────────────────────────────────────────

export async function buildDeliverables(input: DeliverableInput): Promise<DeliverableFile[]> {
  const base = fileBase(input)
  const files: DeliverableFile[] = []
  const add = (format: DeliverableFormat, ext: string, contentType: string, content: Buffer) =>
    files.push({ format, fileName: `${base}.${ext}`, contentType, content, sha256: sha256Hex(content) })
  add('csv', 'csv', 'text/csv; charset=utf-8', Buffer.from(buildCsv(input), 'utf8'))
  const geo = buildGeoJson(input)
  if (geo !== null) add('geojson', 'geojson', 'application/geo+json', Buffer.from(geo, 'utf8'))
  add('landxml', 'xml', 'application/xml', Buffer.from(buildLandXml(input), 'utf8'))
  add('pdf', 'pdf', 'application/pdf', await buildPdf(input))
  return files
}
