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
import { formatPrecision, precisionScale, type PrecisionUnit } from '../../shared/precision'
import { CHART, SLATE, VERDICT } from '../../shared/palette'
import { naturalSortBy } from '../../shared/natural-sort'
import type { AccuracyCheck } from './accuracy-check'
import type { FlaggedObservation, NetworkDrawing, RunSummaryDto, SignedStation } from './signoffs'
import { sha256Hex } from './passwords'

export type Units = 'm' | 'ft' | 'usft'
export type DeliverableFormat = 'csv' | 'geojson' | 'landxml' | 'pdf'

export interface DeliverableInput {
  firmName: string
  project: { id: number; name: string; crs: string; crsName: string; crsDefinition: string | null; units: Units; precisionUnit?: PrecisionUnit }
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
  /** the signed run's stations and observed lines, drawn on the first page of the PDF */
  network?: NetworkDrawing
  /** observations still flagged in the signed run (listed when the signer acknowledged them) */
  flagged?: FlaggedObservation[]
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
 * No IBM Plex Sans file we ship carries ≤, ≥, √ or the combining circumflex
 * (σ̂): write those few in words so nothing prints as a blank box. σ, Greek
 * and accented Latin print as written (Latin, Latin Extended and Greek fonts).
 */
export function pdfSafe(text: string): string {
  return text.replace(/≤/g, 'at most').replace(/≥/g, 'at least').replace(/√/g, 'sqrt').replace(/\u0302/g, '')
}

/**
 * The signed stations as every file lists them: in natural order of their
 * names (KF2 before KF10). The sign-off keeps its own canonical order for its
 * SHA-256 (server/services/signoffs.ts), which this does not touch.
 */
export function signedInOrder(input: DeliverableInput): SignedStation[] {
  return naturalSortBy(input.signoff.stations, (s) => s.name)
}

export function fileBase(input: DeliverableInput): string {
  const slug = input.project.name.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '').slice(0, 40) || 'project'
  return `${slug}-release-${input.release.id}`
}

// ── CSV ────────────────────────────────────────────────────────────────────

/** Header comment lines (`#`), then one row per signed station, values in the project's units. */
export function buildCsv(input: DeliverableInput): string {
  const u = input.project.units
  const ps = precisionScale(u, input.project.precisionUnit)
  // one decimal more than on screen: the file is for further computation
  const prec = (v: number | null) => (v === null ? '' : formatPrecision(v, ps, ps.decimals + 1))
  const rows = signedInOrder(input).map((s) => ({
    name: s.name,
    kind: s.kind,
    [`east_${u}`]: fmt(toUnits(s.east, u)),
    [`north_${u}`]: fmt(toUnits(s.north, u)),
    [`height_${u}`]: fmt(toUnits(s.height, u)),
    [`sd_east_${ps.key}`]: prec(s.sdEast),
    [`sd_north_${ps.key}`]: prec(s.sdNorth),
    [`sd_height_${ps.key}`]: prec(s.sdHeight),
    [`ellipse95_major_${ps.key}`]: prec(s.semiMajor95),
    [`ellipse95_minor_${ps.key}`]: prec(s.semiMinor95),
    ellipse_azimuth_deg: fmt(s.azimuthDeg, 3),
  }))
  const header = [
    `# ${input.project.name}: signed control coordinates, release ${input.release.id}`,
    `# CRS: ${input.project.crs} (${input.project.crsName}); units: ${UNIT_LABEL[u]}; precisions in ${ps.words}: standard deviations (1 sigma) and 95 % error ellipses`,
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
  const features = signedInOrder(input).map((s) => {
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
      Project: { '@_name': input.project.name, '@_desc': `Signed control released by ${input.firmName}, release ${input.release.id}; sign-off SHA-256 ${input.signoff.sha256}. ${CAUTION}` },
      // the application that wrote the file is Tiepoint; the firm that released it is named in Project@desc
      Application: { '@_name': 'Tiepoint', '@_manufacturer': 'Tiepoint', '@_version': '1' },
      CgPoints: {
        '@_name': `Sign-off ${input.signoff.id} by ${input.signoff.signerName}`,
        CgPoint: signedInOrder(input).map((s) => ({
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

/**
 * IBM Plex Sans from @fontsource (shipped with the app) comes as one file per
 * script. pdfkit embeds only the glyphs a document uses (a subset of each
 * file), so the report registers the Latin, Latin Extended and Greek files and
 * writes each run of text with the file whose unicode-range covers it (the
 * ranges are read from the package's own 400.css).
 */
const SUBSETS = ['latin', 'latin-ext', 'greek'] as const
type Subset = (typeof SUBSETS)[number]
const WEIGHTS = { body: 400, bold: 600 } as const
type Weight = keyof typeof WEIGHTS

function fontDirs(): string[] {
  return [process.env.TIEPOINT_FONT_DIR, join(process.cwd(), 'node_modules/@fontsource/ibm-plex-sans/files')].filter(Boolean) as string[]
}

/**
 * Looked up from the working directory because the built server does not
 * carry font files in its bundle. pdfkit reads the WOFF files through fontkit.
 */
function fontBuffer(file: string): Buffer {
  for (const dir of fontDirs()) {
    const p = join(dir, file)
    if (existsSync(p)) return readFileSync(p)
  }
  throw new Error(`IBM Plex Sans (${file}) was not found; install node_modules or set TIEPOINT_FONT_DIR`)
}

let rangesCache: Record<Subset, [number, number][]> | null = null
/** unicode-range of each subset, from @fontsource/ibm-plex-sans/400.css (the ranges the files were cut by). */
export function subsetRanges(): Record<Subset, [number, number][]> {
  if (rangesCache) return rangesCache
  const css = fontDirs().map((d) => join(d, '..', '400.css')).find((p) => existsSync(p))
  if (!css) throw new Error('IBM Plex Sans 400.css was not found; install node_modules or set TIEPOINT_FONT_DIR')
  const text = readFileSync(css, 'utf8')
  const out = {} as Record<Subset, [number, number][]>
  for (const sub of SUBSETS) {
    const m = new RegExp(`ibm-plex-sans-${sub}-400-normal \\*/[^}]*unicode-range:\\s*([^;]+);`).exec(text)
    if (!m) throw new Error(`no unicode-range for the ${sub} subset in ${css}`)
    out[sub] = m[1]!.split(',').map((r) => {
      const [lo, hi] = r.trim().replace(/^U\+/i, '').split('-')
      return [parseInt(lo!, 16), parseInt(hi ?? lo!, 16)] as [number, number]
    })
  }
  rangesCache = out
  return out
}

/** Splits text into runs that one font file can print; characters no file covers fall back to the Latin file. */
export function fontRuns(text: string): { subset: Subset; text: string }[] {
  const ranges = subsetRanges()
  const runs: { subset: Subset; text: string }[] = []
  for (const ch of pdfSafe(text)) {
    const cp = ch.codePointAt(0)!
    const subset = SUBSETS.find((s) => ranges[s].some(([lo, hi]) => cp >= lo && cp <= hi)) ?? 'latin'
    const last = runs[runs.length - 1]
    if (last && last.subset === subset) last.text += ch
    else runs.push({ subset, text: ch })
  }
  return runs
}

interface Column { title: string; width: number; align?: 'left' | 'right' }

const FOOTER_H = 34
const nice = (x: number) => {
  const p = 10 ** Math.floor(Math.log10(x))
  const m = x / p
  return (m >= 5 ? 5 : m >= 2 ? 2 : 1) * p
}

export async function buildPdf(input: DeliverableInput): Promise<Buffer> {
  const doc = new PDFDocument({
    size: 'A4', margins: { top: 40, left: 40, right: 40, bottom: 40 + FOOTER_H }, bufferPages: true,
    font: fontBuffer('ibm-plex-sans-latin-400-normal.woff') as unknown as string,
    info: { Title: `${input.project.name}: release ${input.release.id}`, Author: input.firmName, Creator: 'Tiepoint' },
  })
  for (const w of Object.keys(WEIGHTS) as Weight[]) {
    for (const sub of SUBSETS) doc.registerFont(`${w}-${sub}`, fontBuffer(`ibm-plex-sans-${sub}-${WEIGHTS[w]}-normal.woff`))
  }
  const chunks: Buffer[] = []
  doc.on('data', (c: Buffer) => chunks.push(c))
  const ended = new Promise<void>((resolve, reject) => { doc.on('end', () => resolve()); doc.on('error', reject) })

  const u = input.project.units
  const left = doc.page.margins.left
  const width = doc.page.width - doc.page.margins.left - doc.page.margins.right
  const bottom = () => doc.page.height - doc.page.margins.bottom
  let weight: Weight = 'body'
  let size = 9

  /** flowing text (wraps), each run in the font file that covers it */
  const write = (text: string, opts: { x?: number; y?: number; width?: number; continued?: boolean; align?: 'left' | 'right' | 'center' } = {}) => {
    const runs = fontRuns(text)
    if (!runs.length) runs.push({ subset: 'latin', text: '' })
    runs.forEach((r, i) => {
      doc.font(`${weight}-${r.subset}`).fontSize(size)
      const more = i < runs.length - 1 || !!opts.continued
      const o = { width: opts.width ?? width - ((opts.x ?? left) - left), align: opts.align, continued: more }
      if (i === 0 && (opts.x !== undefined || opts.y !== undefined)) doc.text(r.text, opts.x ?? left, opts.y ?? doc.y, o)
      else doc.text(r.text, o)
    })
  }
  /** one line in a box, no wrapping: table cells and labels */
  const cell = (text: string, x: number, y: number, w: number, align: 'left' | 'right' = 'left') => {
    const runs = fontRuns(text)
    const widths = runs.map((r) => doc.font(`${weight}-${r.subset}`).fontSize(size).widthOfString(r.text))
    const total = widths.reduce((a, b) => a + b, 0)
    let cx = align === 'right' ? x + Math.max(0, w - total) : x
    runs.forEach((r, i) => {
      doc.font(`${weight}-${r.subset}`).fontSize(size).text(r.text, cx, y, { lineBreak: false })
      cx += widths[i]!
    })
  }
  const style = (w: Weight, s: number, colour = '#0f172a') => { weight = w; size = s; doc.fillColor(colour) }
  const widthOf = (text: string) => fontRuns(text).reduce((sum, r) => sum + doc.font(`${weight}-${r.subset}`).fontSize(size).widthOfString(r.text), 0)
  /**
   * σ̂ as σ with a circumflex drawn over it: pdfSafe drops U+0302, which no
   * font file we ship places on σ. The hat sits just above the x-height of the
   * Greek file's σ, centred on the letter, at the text's size and colour.
   */
  const hatOver = (x0: number, x1: number, y: number) => {
    const font = (doc as unknown as { _font: { ascender: number; font?: { xHeight?: number; unitsPerEm?: number } } })._font
    const baseline = y + (font.ascender / 1000) * size
    // IBM Plex Sans: x-height 516 of 1000 units, read from the font when fontkit exposes it
    const xHeight = font.font?.xHeight && font.font.unitsPerEm ? font.font.xHeight / font.font.unitsPerEm : 0.516
    const top = baseline - xHeight * size
    const cx = (x0 + x1) / 2
    doc.save().lineWidth(0.08 * size).lineJoin('miter').strokeColor('#0f172a')
      .moveTo(cx - 0.2 * size, top - 0.1 * size).lineTo(cx, top - 0.3 * size).lineTo(cx + 0.2 * size, top - 0.1 * size).stroke().restore()
  }
  /** `label: value` on one line where the label names σ̂ once */
  const hatLine = (label: string, value: string) => {
    const [before = '', after = ''] = label.split('σ\u0302')
    if (doc.y + 14 > bottom()) doc.addPage()
    const y = doc.y
    let x = left
    const put = (t: string) => { cell(t, x, y, width, 'left'); x += widthOf(t) }
    style('bold', 9)
    put(before)
    const sx = x
    put('σ')
    hatOver(sx, x, y)
    put(`${after}: `)
    style('body', 9)
    put(value)
    doc.x = left
    doc.y = y + doc.currentLineHeight(true)
  }
  const heading = (t: string) => {
    if (doc.y + 40 > bottom()) doc.addPage()
    doc.moveDown(0.8)
    style('bold', 12, '#1f5d5d')
    write(t, { x: left })
    style('body', 9)
  }
  const line = (label: string, value: string) => {
    style('bold', 9)
    write(`${label}: `, { x: left, continued: true })
    style('body', 9)
    write(value)
  }

  const table = (cols: Column[], rows: string[][], emphasise?: (row: number) => boolean) => {
    const rowH = 13
    const drawHeader = () => {
      let x = left
      const y = doc.y
      style('bold', 7.5)
      for (const c of cols) { cell(c.title, x, y, c.width - 4, c.align ?? 'right'); x += c.width }
      doc.moveTo(left, y + rowH - 2).lineTo(left + width, y + rowH - 2).lineWidth(0.5).strokeColor('#cbd5e1').stroke()
      doc.y = y + rowH
    }
    drawHeader()
    rows.forEach((r, ri) => {
      if (doc.y + rowH > bottom()) { doc.addPage(); drawHeader() }
      let x = left
      const y = doc.y
      style(emphasise?.(ri) ? 'bold' : 'body', 8)
      r.forEach((c, i) => { cell(c, x, y, cols[i]!.width - 4, cols[i]!.align ?? 'right'); x += cols[i]!.width })
      doc.y = y + rowH
    })
    doc.x = left
    style('body', 9)
  }

  // ── first page: title, the network drawing, coordinate system and adjustment
  style('bold', 16)
  write(input.project.name, { x: left })
  style('body', 10, '#475569')
  write(`Signed control coordinates — release ${input.release.id} of ${input.firmName}, published ${input.release.publishedAt.toISOString().slice(0, 10)}`)
  style('body', 9)

  if (input.network && input.network.stations.length >= 2) drawNetwork(input.network, 200)

  const r = input.run
  const datumWords = r.datum === 'free'
    ? 'free network (minimally constrained: inner constraints on all stations)'
    : 'control held as stored: stations marked "held" fixed, other control weighted by its σ'
  const scalingWords = r.scaling === 'a-priori'
    ? 'precisions use the a-priori σ0 = 1 (not scaled by the adjustment)'
    : 'precisions scaled by the a-posteriori variance factor σ0² of the adjustment'
  heading('Coordinate system and datum')
  line('CRS', `${input.project.crs} — ${input.project.crsName}`)
  const ps = precisionScale(u, input.project.precisionUnit)
  line('Units', `coordinates in ${UNIT_LABEL[u]}; precisions in ${ps.words}: standard deviations (σ) at 1σ, error ellipses at 95 % confidence`)
  line('Datum', datumWords)
  line('Precision scaling', scalingWords)

  heading('Adjustment')
  line('Run', `${r.number}${r.finishedAt ? `, finished ${r.finishedAt.slice(0, 19).replace('T', ' ')} UTC` : ''}`)
  if (r.counts) line('Observations, unknowns, redundancy', `${r.counts.n}, ${r.counts.u}, ${r.counts.r}`)
  if (r.sigma0 !== null) hatLine('A-posteriori standard deviation of unit weight σ\u03020', r.sigma0.toFixed(3))
  if (r.globalTest) {
    const g = r.globalTest
    line('Global test (χ²)', `${g.passed === null ? 'not applicable (no redundancy)' : g.passed ? 'passed' : 'FAILED'}: statistic ${g.statistic.toFixed(2)}, acceptance interval ${g.lower.toFixed(2)} to ${g.upper.toFixed(2)}`)
  }
  line('Input hash', r.inputHash)

  heading('Signed coordinates')
  const pu = ps.label
  const prec = (v: number | null) => formatPrecision(v, ps)
  const signed = signedInOrder(input)
  table([
    { title: 'Station', width: 56, align: 'left' }, { title: 'Status', width: 36, align: 'left' },
    { title: `East (${u})`, width: 62 }, { title: `North (${u})`, width: 64 }, { title: `Height (${u})`, width: 50 },
    { title: `σE (${pu})`, width: 36 }, { title: `σN (${pu})`, width: 36 }, { title: `σH (${pu})`, width: 36 },
    { title: `a95 (${pu})`, width: 40 }, { title: `b95 (${pu})`, width: 40 }, { title: 'az (°)', width: 59 },
  ], signed.map((s) => [
    s.name, s.fixed ? 'held' : s.kind === 'control' ? 'control' : 'new',
    fmt(toUnits(s.east, u)), fmt(toUnits(s.north, u)), s.height === null ? '—' : fmt(toUnits(s.height, u)),
    prec(s.sdEast), prec(s.sdNorth), prec(s.sdHeight), prec(s.semiMajor95), prec(s.semiMinor95), s.azimuthDeg === null ? '—' : s.azimuthDeg.toFixed(1),
  ]), (i) => signed[i]!.fixed)
  doc.moveDown(0.3)
  style('body', 7.5, '#475569')
  write('Held: control held fixed in the adjustment (printed in bold; its σ is zero by definition). σ: standard deviation (1σ). a95, b95: semi-axes of the absolute error ellipse at 95 % confidence; az: azimuth of a95 clockwise from grid north.', { x: left })
  style('body', 9)

  heading('Accuracy check')
  const c = input.signoff.accuracyCheck
  if (c.profile) {
    line('Tolerance', `${c.profile.name}: ${c.profile.rule}`)
    line('Source', c.profile.source)
  }
  write(c.note, { x: left })
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
  const acknowledged = (c as AccuracyCheck & { acknowledgedFailedTests?: string[] }).acknowledgedFailedTests ?? []
  if (acknowledged.length) {
    doc.moveDown(0.3)
    style('bold', 9, VERDICT.watch)
    write(`The signer acknowledged that run ${r.number} ${acknowledged.join(' and ')}, and signed regardless under their own responsibility.`, { x: left })
    style('body', 9)
    const flagged = input.flagged ?? []
    if (flagged.length) {
      write(`Observations still flagged by data snooping in the signed run (largest |w| first):`, { x: left })
      doc.moveDown(0.2)
      table([
        { title: 'Line', width: 40 }, { title: 'Kind', width: 110, align: 'left' }, { title: 'Observation', width: 260, align: 'left' }, { title: 'w', width: 60 },
      ], flagged.slice(0, 200).map((o) => [String(o.line), o.kind.replace(/_/g, ' '), o.from ? `${o.at}: ${o.from} to ${o.to}` : `${o.at} to ${o.to ?? ''}`, o.w === null ? '—' : o.w.toFixed(2)]))
      if (flagged.length > 200) write(`and ${flagged.length - 200} more (see the run report).`, { x: left })
    }
  }
  line('SHA-256 of the signed list and inputs', input.signoff.sha256)

  heading('Caution')
  write(CAUTION, { x: left })

  // ── every page: the caution and the page number in the footer
  const range = doc.bufferedPageRange()
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i)
    const keep = doc.page.margins.bottom
    doc.page.margins.bottom = 0
    const y = doc.page.height - 40 - FOOTER_H + 8
    doc.moveTo(left, y).lineTo(left + width, y).lineWidth(0.5).strokeColor('#cbd5e1').stroke()
    style('body', 6.5, '#475569')
    write(CAUTION, { x: left, y: y + 4, width: width - 70 })
    cell(`Page ${i - range.start + 1} of ${range.count}`, left + width - 64, y + 4, 64, 'right')
    doc.page.margins.bottom = keep
  }
  doc.end()
  await ended
  return Buffer.concat(chunks)

  /** The network in grid coordinates, north up: lines, stations, 95 % ellipses exaggerated, a scale bar. */
  function drawNetwork(net: NetworkDrawing, boxH: number) {
    const top = doc.y + 8
    const pad = 18
    const es = net.stations.map((s) => s.east)
    const ns = net.stations.map((s) => s.north)
    const minE = Math.min(...es); const maxE = Math.max(...es)
    const minN = Math.min(...ns); const maxN = Math.max(...ns)
    const spanE = Math.max(maxE - minE, 1e-6); const spanN = Math.max(maxN - minN, 1e-6)
    const scale = Math.min((width - 2 * pad) / spanE, (boxH - 2 * pad - 14) / spanN) // points per metre
    const ox = left + (width - spanE * scale) / 2
    const oy = top + pad + ((boxH - 2 * pad - 14) - spanN * scale) / 2
    const px = (e: number) => ox + (e - minE) * scale
    const py = (n: number) => oy + (maxN - n) * scale
    doc.save()
    doc.rect(left, top, width, boxH).lineWidth(0.5).strokeColor('#cbd5e1').stroke()
    const at = new Map(net.stations.map((s) => [s.name, s]))
    for (const { a, b, style: line } of networkLineOps(net)) {
      const p = at.get(a); const q = at.get(b)
      if (!p || !q) continue
      doc.lineWidth(line.width).strokeColor(line.color)
      if (line.dash) doc.dash(line.dash.length, { space: line.dash.space })
      else doc.undash()
      doc.moveTo(px(p.east), py(p.north)).lineTo(px(q.east), py(q.north)).stroke()
    }
    doc.undash()
    // exaggerate so the largest ellipse is about 6 % of the drawing's width
    const maxA = Math.max(0, ...net.stations.map((s) => s.semiMajor95 ?? 0))
    const factor = maxA > 0 ? nice((0.06 * width) / scale / maxA) : 0
    if (factor > 0) {
      doc.lineWidth(0.6).strokeColor(CHART.newStation)
      for (const s of net.stations) {
        if (s.fixed || !s.semiMajor95 || s.semiMinor95 === null || s.azimuthDeg === null) continue
        doc.save().translate(px(s.east), py(s.north)).rotate(s.azimuthDeg - 90)
          .ellipse(0, 0, s.semiMajor95 * factor * scale, Math.max(s.semiMinor95 * factor * scale, 0.3)).stroke().restore()
      }
    }
    for (const s of net.stations) {
      const x = px(s.east); const y = py(s.north)
      if (s.fixed) doc.polygon([x, y - 3.5], [x - 3, y + 2], [x + 3, y + 2]).fillColor('#0f172a').fill()
      else doc.circle(x, y, 1.6).fillColor('#0f172a').fill()
    }
    if (net.stations.length <= 80) {
      style('body', 5.5, '#334155')
      for (const s of net.stations) cell(s.name, px(s.east) + 3, py(s.north) - 8, 60)
    }
    // scale bar in project units, lower left; ellipse scale and legend beside it
    const k = METRES_PER_UNIT[u]
    const barUnits = nice((0.2 * width) / scale / k)
    const barPt = barUnits * k * scale
    const by = top + boxH - 12
    doc.lineWidth(1.2).strokeColor('#0f172a').moveTo(left + 10, by).lineTo(left + 10 + barPt, by).stroke()
    doc.lineWidth(0.8).moveTo(left + 10, by - 3).lineTo(left + 10, by + 3).stroke().moveTo(left + 10 + barPt, by - 3).lineTo(left + 10 + barPt, by + 3).stroke()
    style('body', 6.5, '#0f172a')
    cell(`${barUnits.toLocaleString('en-US')} ${UNIT_LABEL[u]}`, left + 14 + barPt, by - 4, 80)
    const legend = networkLegend(net, factor)
    const room = width - 100 - barPt
    if (widthOf(legend) <= room) cell(legend, left + 90 + barPt, by - 4, room, 'right')
    else {
      // too long for one line beside the scale bar: two right-aligned lines, split at the separator nearest the middle
      const parts = legend.split(' · ')
      let cut = 1
      while (cut < parts.length - 1 && parts.slice(0, cut + 1).join(' · ').length <= legend.length / 2) cut++
      cell(parts.slice(0, cut).join(' · '), left + 90 + barPt, by - 11, room, 'right')
      cell(parts.slice(cut).join(' · '), left + 90 + barPt, by - 4, room, 'right')
    }
    if (net.vectors?.length) {
      // a sample of the vector line in the drawing's upper left corner, so the legend's words have a key
      const ky = top + 9
      const v = NETWORK_LINE.vector
      doc.lineWidth(v.width).strokeColor(v.color).dash(v.dash!.length, { space: v.dash!.space }).moveTo(left + 8, ky).lineTo(left + 30, ky).stroke().undash()
      style('body', 6.5, '#0f172a')
      cell('GNSS vector', left + 34, ky - 3.5, 80)
    }
    doc.restore()
    doc.x = left
    doc.y = top + boxH + 6
    style('body', 9)
  }
}

// ── the network drawing's lines ─────────────────────────────────────────────

export interface NetworkLineStyle { color: string; width: number; dash: { length: number; space: number } | null }
/**
 * How the PDF tells lines apart: terrestrial observations as thin solid grey
 * lines, GNSS vectors dashed in the violet the on-screen map uses for its
 * vector band (CHART.vector), so the same colour means "GNSS vector" on
 * screen and on paper. The dash, not only the colour, sets vectors apart
 * (a grey-scale print keeps the difference).
 */
export const NETWORK_LINE: Readonly<Record<'observed' | 'vector', NetworkLineStyle>> = {
  observed: { color: SLATE[400], width: 0.4, dash: null },
  vector: { color: CHART.vector, width: 0.9, dash: { length: 3, space: 2 } },
}

/** What the drawing strokes, in order: terrestrial lines first, then vectors over them (a pair with both shows both). */
export function networkLineOps(net: NetworkDrawing): { a: string; b: string; kind: 'observed' | 'vector'; style: NetworkLineStyle }[] {
  return [
    ...net.lines.map(([a, b]) => ({ a, b, kind: 'observed' as const, style: NETWORK_LINE.observed })),
    ...(net.vectors ?? []).map(([a, b]) => ({ a, b, kind: 'vector' as const, style: NETWORK_LINE.vector })),
  ]
}

/** The legend under the drawing; it names vectors only when the network has them. */
export function networkLegend(net: NetworkDrawing, ellipseFactor: number): string {
  const vectors = net.vectors?.length ?? 0
  return [
    'triangles: held control · dots: adjusted',
    ...(vectors > 0 ? [`dashed violet: GNSS vector${vectors === 1 ? '' : 's'} (${vectors})`] : []),
    ...(ellipseFactor > 0 ? [`error ellipses at 95 % confidence, drawn ${ellipseFactor.toLocaleString('en-US')} × true size`] : []),
    'grid north up',
  ].join(' · ')
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
