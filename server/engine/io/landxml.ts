// Reader for LandXML 1.2 raw survey observations and control points (an open
// standard: LandXML.org, "LandXML-1.2.xsd", 2008). It reads Units, CgPoints and
// Survey/InstrumentSetup/RawObservation into the same records as the CSV
// reader, in metres and radians. The text is read in one SAX pass (saxes:
// strict XML 1.0 well-formedness, no DTD processing, no entity expansion)
// into a small tree of just what is read, so a 10 MB file never becomes a DOM.
//
// How the schema maps to our records (see ./README.md for the full table):
// - CgPoint text is "northing easting [elevation]" (LandXML order, north first).
//   A CgPoint with pntSurv="control" becomes a fixed control record; other
//   CgPoints carry approximate positions only and are reported in one warning.
// - Each InstrumentSetup is one direction set (named by its id, else by its
//   ordinal); horizAngle → direction, zenithAngle → zenith, slopeDistance →
//   slope_distance, horizDistance → horizontal_distance, azimuth → azimuth.
//   instrumentHeight and targetHeight become hi and ht.
// - RawObservations in an ObservationGroup find their set-up by setupID.
// - GPSSetup and GPSVector (with its GPSQCInfoLevel2 covariance) become
//   gnss_baseline records; the mapping and its sources are in ./landxml-gnss.ts.
// - Every issue carries the real source line of the element (where its start
//   tag begins, from the SAX parser) and, as its column, the element path with ordinals, e.g.
//   "Survey[1]/InstrumentSetup[2]/RawObservation[4]@horizAngle".
// - Elements we do not read are reported as warnings, never dropped silently.
// - The reader never throws, whatever bytes it is given.

import { SaxesParser } from 'saxes'
import type { ControlRecord, ObservationKind, ObservationRecord, ReadIssue, ReadResult } from '../types'
import { RAD_PER_DEG, RAD_PER_GON, clip, parseNumber, parsePackedDms, type Parsed } from './units'
import { GnssVectors } from './landxml-gnss'

type Attrs = Record<string, string>
interface XNode {
  name: string
  attrs: Attrs
  text: string
  children: XNode[]
  line: number
  parent: XNode | null
  ordinal: number
}

/** XPath-like address with ordinals, built only when an issue needs it. */
function pathOf(node: XNode): string {
  const own = `${node.name}[${node.ordinal}]`
  return node.parent ? `${pathOf(node.parent)}/${own}` : own
}

// Linear units of LandXML 1.2 (Metric and Imperial linearUnit enumerations)
// in metres. Feet: 0.3048 m exactly; U.S. survey foot 1200/3937 m (Federal
// Register 24 FR 5348, 1959); inch 0.0254 m exactly (same source).
const LINEAR_UNITS: Record<string, number> = {
  meter: 1,
  millimeter: 0.001,
  centimeter: 0.01,
  kilometer: 1000,
  foot: 0.3048,
  ussurveyfoot: 1200 / 3937,
  inch: 0.0254,
}

type AngularUnit = 'radians' | 'grads' | 'decimal degrees' | 'decimal dd.mm.ss'
const ANGULAR_UNITS: readonly AngularUnit[] = ['radians', 'grads', 'decimal degrees', 'decimal dd.mm.ss']
// Short symbols stored beside each value as "the unit the file used" (the
// same symbols the CSV reader uses; the LandXML-only metric multiples and the
// inch get their usual abbreviations). Packed dd.mmss is a DMS notation.
const LINEAR_SYMBOLS: Record<string, string> = {
  meter: 'm', millimeter: 'mm', centimeter: 'cm', kilometer: 'km', foot: 'ft', ussurveyfoot: 'usft', inch: 'in',
}
const ANGULAR_SYMBOLS: Record<AngularUnit, string> = { radians: 'rad', grads: 'gon', 'decimal degrees': 'deg', 'decimal dd.mm.ss': 'dms' }

// Elements that describe the job rather than measure it; read past quietly.
const METADATA = new Set([
  'Project',
  'Application',
  'Author',
  'CoordinateSystem',
  'SurveyHeader',
  'Equipment',
  'FeatureDictionary',
  'Feature',
  'Annotation',
  'PersonnelInfo',
  'Personnel',
  'FieldNote',
  'Corrections',
  'AnnualCorrection',
  'Monuments',
  'SurveyMonument',
  'Backsight',
  'BacksightPoint',
  'InstrumentDetails',
  'InstrumentPoint',
  'TargetSetup',
  'TargetPoint',
  'LaserDetails',
  'EDMDetails',
  'Description',
])

const MAX_DISTANCE_M = 1e6
const MAX_COORDINATE_M = 1e8
const MAX_INSTRUMENT_HEIGHT_M = 1000
const FULL_CIRCLE = 2 * Math.PI

/** Reads LandXML 1.2 raw observations and control points. Never throws. */
export function readLandXml(text: string): ReadResult {
  try {
    return read(typeof text === 'string' ? text : String(text))
  } catch (err) {
    return {
      ok: false,
      errors: [{ line: 1, column: 'xml', message: `could not be read (${err instanceof Error ? err.message : String(err)})` }],
      warnings: [],
    }
  }
}

function read(input: string): ReadResult {
  const text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input
  const errors: ReadIssue[] = []
  const warnings: ReadIssue[] = []

  if (text.trim() === '') {
    return { ok: false, errors: [{ line: 1, column: 'xml', message: 'the file is empty' }], warnings }
  }
  // One streaming pass (saxes, a strict SAX parser: well-formedness errors
  // with their line, no DTD and no entity expansion) builds only the small
  // tree below; no full DOM of the file is ever made.
  const tree = buildTree(text)
  if (!tree.ok) return { ok: false, errors: [tree.issue], warnings }
  const roots = tree.roots
  const root = roots.find((n) => n.name === 'LandXML')
  if (!root) {
    const first = roots.find((n) => !n.name.startsWith('?'))
    return {
      ok: false,
      errors: [{ line: first?.line ?? 1, column: 'xml', message: `the root element is '${clip(first?.name ?? '')}', not LandXML` }],
      warnings,
    }
  }

  const ctx = new Context(errors, warnings)
  // Units first: every number below depends on them, wherever they sit.
  const units = root.children.find((c) => c.name === 'Units')
  if (!units) {
    errors.push({ line: root.line, column: pathOf(root), message: 'has no Units element: the reader will not guess units' })
    return { ok: false, errors, warnings }
  }
  ctx.readUnits(units)
  for (const child of root.children) {
    if (child.name === 'Units') continue
    else if (child.name === 'CgPoints') ctx.readCgPoints(child)
    else if (child.name === 'Survey') ctx.readSurvey(child)
    else ctx.unknown(child)
  }
  ctx.finish()
  if (errors.length > 0) return { ok: false, errors, warnings }
  if (ctx.controls.length === 0 && ctx.observations.length === 0) {
    warnings.push({ line: root.line, column: pathOf(root), message: 'holds no control points, raw observations or GNSS vectors' })
  }
  return { ok: true, controls: ctx.controls, observations: ctx.observations, warnings }
}

/** Characters fed to the parser at a time: the text is read in slices, never copied whole. */
const SLICE = 1 << 16
/** Deeper nesting than any LandXML survey needs is refused rather than walked. */
const MAX_DEPTH = 256
/** Thrown inside a parser handler to stop at the first problem. */
const STOP = Symbol('stop')

/** The local part of a qualified name (namespace prefixes are dropped, as LandXML files use them freely). */
const local = (name: string) => {
  const i = name.indexOf(':')
  return i < 0 ? name : name.slice(i + 1)
}

/**
 * Builds the small element tree the reader walks, with each element's source
 * line (where its start tag begins), ordinal among same-named siblings and
 * trimmed text, in one SAX pass over the text.
 */
function buildTree(text: string): { ok: true; roots: XNode[] } | { ok: false; issue: ReadIssue } {
  const parser = new SaxesParser({ position: true })
  const roots: XNode[] = []
  const stack: XNode[] = []
  const siblings: Map<string, number>[] = [new Map()]
  const parts: string[][] = []
  let current = ''
  let tagLine = 1
  let issue: ReadIssue | null = null
  const flush = () => {
    const t = current.trim()
    if (t !== '' && parts.length > 0) parts[parts.length - 1]!.push(t)
    current = ''
  }
  parser.on('error', (e) => {
    const msg = e.message.replace(/^[^:]*:\d+:\d+: /, '')
    issue ??= { line: Math.max(1, parser.line), column: 'xml', message: `is not well-formed XML (column ${parser.column}): ${msg}` }
    throw STOP
  })
  // Fired once the name is read, so the parser already stands past the
  // character after it; when that was a line break (column 0), the tag began on the line before.
  parser.on('opentagstart', () => { tagLine = parser.column === 0 ? parser.line - 1 : parser.line })
  parser.on('opentag', (tag) => {
    flush()
    if (stack.length >= MAX_DEPTH) {
      issue ??= { line: tagLine, column: 'xml', message: `nests elements more than ${MAX_DEPTH} deep` }
      throw STOP
    }
    const name = local(tag.name)
    const counts = siblings[siblings.length - 1]!
    const ordinal = (counts.get(name) ?? 0) + 1
    counts.set(name, ordinal)
    const attrs: Attrs = {}
    for (const [k, v] of Object.entries(tag.attributes as Record<string, string>)) {
      if (k === 'xmlns' || k.startsWith('xmlns:')) continue
      attrs[local(k)] = v
    }
    const parent = stack[stack.length - 1] ?? null
    const node: XNode = { name, attrs, text: '', children: [], line: tagLine, parent, ordinal }
    ;(parent ? parent.children : roots).push(node)
    stack.push(node)
    siblings.push(new Map())
    parts.push([])
  })
  parser.on('text', (t) => { current += t })
  parser.on('cdata', (t) => { current += t })
  parser.on('closetag', () => {
    flush()
    const node = stack.pop()
    siblings.pop()
    const own = parts.pop()
    if (node && own && own.length > 0) node.text = own.join(' ')
  })
  try {
    for (let i = 0; i < text.length; i += SLICE) {
      // never split a surrogate pair between two slices
      let end = Math.min(i + SLICE, text.length)
      const last = text.charCodeAt(end - 1)
      if (end < text.length && last >= 0xd800 && last <= 0xdbff) end++
      parser.write(text.slice(i, end))
      i = end - SLICE
    }
    parser.close()
  } catch (e) {
    if (e !== STOP) throw e
  }
  if (issue) return { ok: false, issue }
  return { ok: true, roots }
}

interface PendingObservation {
  node: XNode
  setupId: string | null
  setup: Setup | null
}

interface Setup {
  node: XNode
  set: string
  station: string
  hi: number | null
}

class Context {
  controls: ControlRecord[] = []
  observations: ObservationRecord[] = []
  private metresPerUnit = 1
  private linearSymbol = 'm'
  private angular: AngularUnit = 'decimal degrees'
  private direction: AngularUnit = 'decimal degrees'
  private setups = new Map<string, Setup>()
  private pending: PendingObservation[] = []
  private setupCount = 0
  private approximate: XNode[] = []
  private controlNames = new Set<string>()
  // GPSSetup / GPSVector / GPSPosition of a Survey (./landxml-gnss.ts)
  private gnss = new GnssVectors<XNode>({
    err: (n, a, m) => this.err(n, a, m),
    warn: (n, a, m) => this.warn(n, a, m),
    unknown: (n) => this.unknown(n),
    unit: () => ({ metres: this.metresPerUnit, symbol: this.linearSymbol }),
  })

  constructor(
    private errors: ReadIssue[],
    private warnings: ReadIssue[],
  ) {}

  private err(node: XNode, attr: string | null, message: string) {
    this.errors.push({ line: node.line, column: attr ? `${pathOf(node)}@${attr}` : pathOf(node), message })
  }

  private warn(node: XNode, attr: string | null, message: string) {
    this.warnings.push({ line: node.line, column: attr ? `${pathOf(node)}@${attr}` : pathOf(node), message })
  }

  unknown(node: XNode) {
    if (METADATA.has(node.name)) return
    // Satellite elements outside the places the reader maps them (GPSSetup,
    // GPSVector, GPSPosition directly in Survey) may carry vectors the network
    // would be adjusted with; ignoring them could adjust a different network
    // than the file describes, so the file is refused.
    if (/^GPS/i.test(node.name)) {
      this.err(node, null, `element ${node.name} is not read here: Tiepoint reads GNSS vectors as GPSSetup and GPSVector elements directly inside Survey; nothing was read`)
      return
    }
    this.warn(node, null, `element ${node.name} is not read by Tiepoint; ignored`)
  }

  readUnits(units: XNode) {
    const sys = units.children.find((c) => c.name === 'Metric' || c.name === 'Imperial')
    if (!sys) {
      this.err(units, null, 'has neither Metric nor Imperial: the reader will not guess units')
      return
    }
    for (const c of units.children) if (c !== sys) this.unknown(c)
    const linear = sys.attrs.linearUnit ?? ''
    const factor = LINEAR_UNITS[linear.toLowerCase()]
    if (factor === undefined) {
      this.err(sys, 'linearUnit', `'${clip(linear)}' is not a supported linear unit (meter, millimeter, centimeter, kilometer, foot, USSurveyFoot, inch)`)
    } else {
      this.metresPerUnit = factor
      this.linearSymbol = LINEAR_SYMBOLS[linear.toLowerCase()] ?? 'm'
    }
    const ang = this.angularUnit(sys, 'angularUnit')
    if (ang) this.angular = ang
    // directionUnit defaults to angularUnit when absent.
    const dir = sys.attrs.directionUnit === undefined ? ang : this.angularUnit(sys, 'directionUnit')
    if (dir) this.direction = dir
  }

  private angularUnit(node: XNode, attr: string): AngularUnit | null {
    const v = (node.attrs[attr] ?? '').trim()
    if (v === '') {
      this.err(node, attr, 'is missing: the reader will not guess the angle unit')
      return null
    }
    const u = ANGULAR_UNITS.find((a) => a === v.toLowerCase())
    if (!u) this.err(node, attr, `'${clip(v)}' is not a supported angular unit (${ANGULAR_UNITS.join(', ')})`)
    return u ?? null
  }

  private length(node: XNode, attr: string | null, text: string): number | null {
    const p = parseNumber(text)
    if (!p.ok) {
      this.err(node, attr, p.message)
      return null
    }
    return p.value * this.metresPerUnit
  }

  private angle(node: XNode, attr: string, text: string, unit: AngularUnit): number | null {
    let p: Parsed
    if (unit === 'decimal dd.mm.ss') p = parsePackedDms(text)
    else {
      const n = parseNumber(text)
      p = !n.ok
        ? n
        : { ok: true, value: unit === 'radians' ? n.value : unit === 'grads' ? n.value * RAD_PER_GON : n.value * RAD_PER_DEG }
    }
    if (!p.ok) {
      this.err(node, attr, p.message)
      return null
    }
    if (!(p.value >= 0 && p.value < FULL_CIRCLE)) {
      this.err(node, attr, `'${clip(text)}' is outside 0 to a full circle`)
      return null
    }
    return p.value
  }

  readCgPoints(group: XNode) {
    for (const c of group.children) {
      if (c.name === 'CgPoint') this.readCgPoint(c)
      else if (c.name === 'CgPoints') this.readCgPoints(c)
      else this.unknown(c)
    }
  }

  private readCgPoint(node: XNode) {
    const name = (node.attrs.name ?? node.attrs.pntRef ?? '').trim()
    if (name === '') {
      this.err(node, 'name', 'is missing: a CgPoint needs a name')
      return
    }
    if ((node.attrs.pntSurv ?? '').toLowerCase() !== 'control') {
      this.approximate.push(node)
      return
    }
    const parts = node.text === '' ? [] : node.text.split(/\s+/)
    if (parts.length !== 2 && parts.length !== 3) {
      this.err(node, null, `control point '${clip(name)}' must hold "northing easting [elevation]", found '${clip(node.text)}'`)
      return
    }
    const values: number[] = []
    for (const part of parts) {
      const v = this.length(node, null, part)
      if (v === null) return
      if (Math.abs(v) > MAX_COORDINATE_M) {
        this.err(node, null, `'${clip(part)}' is too large for a coordinate`)
        return
      }
      values.push(v)
    }
    if (this.controlNames.has(name)) {
      this.err(node, 'name', `control point '${clip(name)}' appears twice`)
      return
    }
    this.controlNames.add(name)
    this.controls.push({
      line: node.line,
      station: name,
      north: values[0]!,
      east: values[1]!,
      height: values.length === 3 ? values[2]! : null,
      sdEast: null,
      sdNorth: null,
      sdHeight: null,
    })
  }

  readSurvey(survey: XNode) {
    for (const c of survey.children) {
      if (c.name === 'InstrumentSetup') this.readSetup(c)
      else if (c.name === 'ObservationGroup') this.readGroup(c)
      else if (c.name === 'GPSSetup') this.gnss.setup(c)
      else if (c.name === 'GPSVector') this.gnss.vector(c)
      else if (c.name === 'GPSPosition') this.gnss.position(c)
      else this.unknown(c)
    }
  }

  private readSetup(node: XNode) {
    this.setupCount++
    const point = node.children.find((c) => c.name === 'InstrumentPoint')
    const station = (point?.attrs.pntRef ?? node.attrs.stationName ?? '').trim()
    if (station === '') {
      this.err(node, 'stationName', 'names no station (give InstrumentPoint pntRef or stationName)')
    }
    let hi: number | null = null
    if (node.attrs.instrumentHeight !== undefined) {
      hi = this.length(node, 'instrumentHeight', node.attrs.instrumentHeight)
      if (hi !== null && Math.abs(hi) > MAX_INSTRUMENT_HEIGHT_M) {
        this.err(node, 'instrumentHeight', `'${clip(node.attrs.instrumentHeight)}' is implausibly large`)
        hi = null
      }
    }
    const id = (node.attrs.id ?? '').trim()
    const setup: Setup = { node, set: id !== '' ? id : `setup ${this.setupCount}`, station, hi }
    if (id !== '') {
      if (this.setups.has(id)) this.err(node, 'id', `set-up id '${clip(id)}' is used twice`)
      this.setups.set(id, setup)
    }
    for (const c of node.children) {
      if (c.name === 'RawObservation') this.pending.push({ node: c, setupId: null, setup })
      else if (c.name === 'ObservationGroup') this.readGroup(c, setup)
      else this.unknown(c)
    }
  }

  private readGroup(node: XNode, setup: Setup | null = null) {
    for (const c of node.children) {
      if (c.name === 'RawObservation') {
        const setupId = (c.attrs.setupID ?? node.attrs.setupID ?? '').trim()
        this.pending.push({ node: c, setupId: setupId === '' ? null : setupId, setup })
      } else this.unknown(c)
    }
  }

  // RawObservations are resolved once every set-up is known, because an
  // ObservationGroup may come before the InstrumentSetup it refers to.
  finish() {
    for (const p of this.pending) this.readRaw(p)
    this.observations.push(...this.gnss.finish())
    if (this.approximate.length > 0) {
      const first = this.approximate[0]!
      this.warn(
        first,
        null,
        `${this.approximate.length} CgPoint(s) not marked pntSurv="control" give approximate positions only and are not held (first: '${clip(first.attrs.name ?? '')}')`,
      )
    }
  }

  private readRaw({ node, setupId, setup: parentSetup }: PendingObservation) {
    const setup = setupId !== null ? (this.setups.get(setupId) ?? null) : parentSetup
    if (!setup) {
      this.err(node, 'setupID', setupId ? `refers to set-up '${clip(setupId)}', which the file does not define` : 'belongs to no InstrumentSetup')
      return
    }
    if (setup.station === '') return // already reported on the set-up
    const targetNode = node.children.find((c) => c.name === 'TargetPoint')
    const target = (targetNode?.attrs.pntRef ?? targetNode?.attrs.name ?? node.attrs.targetPntRef ?? '').trim()
    for (const c of node.children) if (c.name !== 'TargetPoint') this.unknown(c)
    if (target === '') {
      this.err(node, null, 'names no target (TargetPoint pntRef)')
      return
    }
    if (target === setup.station) {
      this.err(node, null, `targets its own set-up station '${clip(target)}'`)
      return
    }
    const before = this.errors.length
    let ht: number | null = null
    if (node.attrs.targetHeight !== undefined) {
      ht = this.length(node, 'targetHeight', node.attrs.targetHeight)
      if (ht !== null && Math.abs(ht) > MAX_INSTRUMENT_HEIGHT_M) {
        this.err(node, 'targetHeight', `'${clip(node.attrs.targetHeight)}' is implausibly large`)
      }
    }
    const found: Array<[ObservationKind, number]> = []
    const a = node.attrs
    if (a.horizAngle !== undefined) {
      const v = this.angle(node, 'horizAngle', a.horizAngle, this.angular)
      if (v !== null) found.push(['direction', v])
    }
    if (a.zenithAngle !== undefined) {
      const v = this.angle(node, 'zenithAngle', a.zenithAngle, this.angular)
      if (v !== null) found.push(['zenith', v])
    }
    if (a.azimuth !== undefined) {
      const v = this.angle(node, 'azimuth', a.azimuth, this.direction)
      if (v !== null) found.push(['azimuth', v])
    }
    for (const [attr, kind] of [
      ['slopeDistance', 'slope_distance'],
      ['horizDistance', 'horizontal_distance'],
    ] as const) {
      if (a[attr] === undefined) continue
      const v = this.length(node, attr, a[attr])
      if (v === null) continue
      if (v <= 0) this.err(node, attr, `'${clip(a[attr])}': a distance must be positive`)
      else if (v > MAX_DISTANCE_M) this.err(node, attr, `'${clip(a[attr])}' is too large for a distance`)
      else found.push([kind, v])
    }
    for (const attr of ['vertDistance', 'vertAngle', 'horizOffset', 'vertOffset']) {
      if (a[attr] !== undefined) this.warn(node, attr, `${attr} is not read by Tiepoint; ignored`)
    }
    if (this.errors.length > before) return
    if (found.length === 0) {
      this.warn(node, null, 'holds no measurement Tiepoint reads (horizAngle, zenithAngle, slopeDistance, horizDistance, azimuth)')
      return
    }
    for (const [kind, value] of found) {
      this.observations.push({
        line: node.line,
        kind,
        at: setup.station,
        from: null,
        to: target,
        value,
        sigma: null,
        hi: setup.hi,
        ht,
        set: kind === 'direction' ? setup.set : null,
        lengthKm: null,
        note: (a.desc ?? '').trim(),
        unit: kind === 'slope_distance' || kind === 'horizontal_distance' ? this.linearSymbol : ANGULAR_SYMBOLS[kind === 'azimuth' ? this.direction : this.angular],
      })
    }
  }
}
