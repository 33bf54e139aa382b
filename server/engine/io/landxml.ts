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
import { READ_BATCH, collectBatches } from './batches'
import type { ControlRecord, ObservationKind, ObservationRecord, ReadIssue, ReadResult, RecordBatches } from '../types'
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
  return collectBatches(readLandXmlBatches(typeof text === 'string' ? text : String(text)))
}

/**
 * Reads LandXML 1.2 like readLandXml, handing the observation records out in
 * batches while it reads, from a string or from the file's UTF-8 bytes
 * (decoded slice by slice, so no copy of the whole text is made). Each
 * survey set-up is turned into records as soon as its end tag is read and its
 * elements are let go, so memory stays flat however long the file is. (That
 * needs the units, so when the Units element comes after the survey the
 * elements before it are kept until it is read.) Never throws.
 */
export function* readLandXmlBatches(source: string | Uint8Array, batchSize = READ_BATCH): RecordBatches {
  const errors: ReadIssue[] = []
  const warnings: ReadIssue[] = []
  const ctx = new Context(errors, warnings)
  const tree = new TreeBuilder((node) => ctx.closed(node))
  try {
    let first = true
    for (const slice of slicesOf(source)) {
      // a byte-order mark is not part of the document
      const part = first && slice.charCodeAt(0) === 0xfeff ? slice.slice(1) : slice
      first = false
      if (!tree.write(part)) break
      if (ctx.out.length >= batchSize) {
        const batch = ctx.take()
        if (errors.length === 0) yield batch
      }
    }
    if (!tree.issue) tree.close()
    if (!tree.issue && ctx.unitsRead) ctx.finish()
  } catch (err) {
    return { ok: false, errors: [{ line: 1, column: 'xml', message: `could not be read (${err instanceof Error ? err.message : String(err)})` }], warnings: [] }
  }
  if (tree.issue) return { ok: false, errors: [tree.issue], warnings: [] }
  if (tree.empty) return { ok: false, errors: [{ line: 1, column: 'xml', message: 'the file is empty' }], warnings: [] }
  const root = tree.roots.find((n) => n.name === 'LandXML')
  if (!root) {
    const first = tree.roots[0]
    return { ok: false, errors: [{ line: first?.line ?? 1, column: 'xml', message: `the root element is '${clip(first?.name ?? '')}', not LandXML` }], warnings: [] }
  }
  if (!ctx.unitsRead) {
    return { ok: false, errors: [{ line: root.line, column: pathOf(root), message: 'has no Units element: the reader will not guess units' }], warnings: [] }
  }
  const rest = ctx.take()
  if (errors.length > 0) return { ok: false, errors, warnings }
  if (rest.length > 0) yield rest
  if (ctx.controls.length === 0 && ctx.emitted === 0) {
    warnings.push({ line: root.line, column: pathOf(root), message: 'holds no control points, raw observations or GNSS vectors' })
  }
  return { ok: true, controls: ctx.controls, warnings }
}

/** Characters fed to the parser at a time: the text is read in slices, never copied whole. */
const SLICE = 1 << 16
/** Deeper nesting than any LandXML survey needs is refused rather than walked. */
const MAX_DEPTH = 256
/** Thrown inside a parser handler to stop at the first problem. */
const STOP = Symbol('stop')

/** The text in slices of about SLICE characters, from a string or from UTF-8 bytes. */
function* slicesOf(source: string | Uint8Array): Generator<string> {
  if (typeof source === 'string') {
    for (let i = 0; i < source.length;) {
      // never split a surrogate pair between two slices
      let end = Math.min(i + SLICE, source.length)
      const last = source.charCodeAt(end - 1)
      if (end < source.length && last >= 0xd800 && last <= 0xdbff) end++
      yield source.slice(i, end)
      i = end
    }
    return
  }
  // stream mode keeps a character split between two byte slices whole
  const decoder = new TextDecoder('utf-8')
  for (let i = 0; i < source.length; i += SLICE) {
    const end = Math.min(i + SLICE, source.length)
    yield decoder.decode(source.subarray(i, end), { stream: end < source.length })
  }
}

/** The local part of a qualified name (namespace prefixes are dropped, as LandXML files use them freely). */
const local = (name: string) => {
  const i = name.indexOf(':')
  return i < 0 ? name : name.slice(i + 1)
}

/**
 * Builds the small element tree the reader walks, with each element's source
 * line (where its start tag begins), ordinal among same-named siblings and
 * trimmed text, in one SAX pass over the text fed to it slice by slice.
 * `closed` is told of each element when its end tag is read; it may take the
 * element out of its parent's children to let it go.
 */
class TreeBuilder {
  readonly roots: XNode[] = []
  issue: ReadIssue | null = null
  /** no element and nothing but white space so far */
  empty = true
  private parser = new SaxesParser({ position: true })
  private stack: XNode[] = []
  private siblings: Map<string, number>[] = [new Map()]
  private parts: string[][] = []
  private current = ''
  private tagLine = 1

  constructor(private closed: (node: XNode) => void) {
    const parser = this.parser
    parser.on('error', (e) => {
      const msg = e.message.replace(/^[^:]*:\d+:\d+: /, '')
      this.issue ??= { line: Math.max(1, parser.line), column: 'xml', message: `is not well-formed XML (column ${parser.column}): ${msg}` }
      throw STOP
    })
    // Fired once the name is read, so the parser already stands past the
    // character after it; when that was a line break (column 0), the tag began on the line before.
    parser.on('opentagstart', () => { this.tagLine = parser.column === 0 ? parser.line - 1 : parser.line })
    parser.on('opentag', (tag) => this.open(tag.name, tag.attributes as Record<string, string>))
    parser.on('text', (t) => { this.current += t })
    parser.on('cdata', (t) => { this.current += t })
    parser.on('closetag', () => this.close1())
  }

  /** Feeds one slice; false once the text is known not to be well-formed. */
  write(slice: string): boolean {
    if (this.empty && slice.trim() !== '') this.empty = false
    return this.run(() => this.parser.write(slice))
  }

  close(): boolean {
    // an empty document is reported as such, not as a parser error
    return this.empty || this.run(() => this.parser.close())
  }

  private run(step: () => void): boolean {
    try {
      step()
    } catch (e) {
      if (e !== STOP) throw e
    }
    return this.issue === null
  }

  private flush() {
    const t = this.current.trim()
    if (t !== '' && this.parts.length > 0) this.parts[this.parts.length - 1]!.push(t)
    this.current = ''
  }

  private open(qname: string, attributes: Record<string, string>) {
    this.flush()
    if (this.stack.length >= MAX_DEPTH) {
      this.issue ??= { line: this.tagLine, column: 'xml', message: `nests elements more than ${MAX_DEPTH} deep` }
      throw STOP
    }
    const name = local(qname)
    const counts = this.siblings[this.siblings.length - 1]!
    const ordinal = (counts.get(name) ?? 0) + 1
    counts.set(name, ordinal)
    const attrs: Attrs = {}
    for (const k in attributes) {
      if (k === 'xmlns' || k.startsWith('xmlns:')) continue
      attrs[local(k)] = attributes[k]!
    }
    const parent = this.stack[this.stack.length - 1] ?? null
    const node: XNode = { name, attrs, text: '', children: [], line: this.tagLine, parent, ordinal }
    ;(parent ? parent.children : this.roots).push(node)
    this.stack.push(node)
    this.siblings.push(new Map())
    this.parts.push([])
  }

  private close1() {
    this.flush()
    const node = this.stack.pop()
    this.siblings.pop()
    const own = this.parts.pop()
    if (node && own && own.length > 0) node.text = own.join(' ')
    if (node) this.closed(node)
  }
}

interface PendingObservation {
  node: XNode
  setupId: string | null
  setup: Setup | null
}

interface Setup {
  set: string
  station: string
  hi: number | null
}

const isRoot = (node: XNode | null): boolean => node !== null && node.parent === null && node.name === 'LandXML'

class Context {
  controls: ControlRecord[] = []
  /** records read and not yet taken by the batch consumer */
  out: ObservationRecord[] = []
  /** records handed out so far */
  emitted = 0
  unitsRead = false
  private metresPerUnit = 1
  private linearSymbol = 'm'
  private angular: AngularUnit = 'decimal degrees'
  private direction: AngularUnit = 'decimal degrees'
  private setups = new Map<string, Setup>()
  // RawObservations wait here, in document order, until their set-up is known
  private pending: PendingObservation[] = []
  private pendingHead = 0
  private setupCount = 0
  private approximateFirst: XNode | null = null
  private approximateCount = 0
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

  take(): ObservationRecord[] {
    const batch = this.out
    this.out = []
    this.emitted += batch.length
    return batch
  }

  /**
   * Told of each element as its end tag is read. Once the units are known,
   * every child of LandXML (and every child of a Survey) is read as it closes
   * and taken out of the tree, in document order. Until then elements are
   * kept, and read when the Units element closes.
   */
  closed(node: XNode) {
    const parent = node.parent
    if (parent && isRoot(parent)) {
      if (node.name === 'Units') {
        // the first Units element counts; a later one is passed over, as before streaming
        if (this.unitsRead) return
        this.unitsRead = true
        this.readUnits(node)
        for (const earlier of parent.children) if (earlier !== node) this.rootChild(earlier)
        parent.children.length = 0
        return
      }
      if (!this.unitsRead) return
      this.rootChild(node)
      parent.children.pop()
    } else if (parent?.name === 'Survey' && isRoot(parent.parent) && this.unitsRead) {
      this.surveyChild(node)
      parent.children.pop()
    }
  }

  private rootChild(node: XNode) {
    if (node.name === 'Units') return
    if (node.name === 'CgPoints') this.readCgPoints(node)
    else if (node.name === 'Survey') this.readSurvey(node)
    else this.unknown(node)
  }

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
      this.approximateFirst ??= node
      this.approximateCount++
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

  /** The children of a Survey not yet read (those that closed before the units were known). */
  readSurvey(survey: XNode) {
    for (const c of survey.children) this.surveyChild(c)
    survey.children.length = 0
  }

  private surveyChild(c: XNode) {
    if (c.name === 'InstrumentSetup') this.readSetup(c)
    else if (c.name === 'ObservationGroup') this.readGroup(c)
    else if (c.name === 'GPSSetup') this.gnss.setup(c)
    else if (c.name === 'GPSVector') this.gnss.vector(c)
    else if (c.name === 'GPSPosition') this.gnss.position(c)
    else this.unknown(c)
    this.drain(false)
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
    const setup: Setup = { set: id !== '' ? id : `setup ${this.setupCount}`, station, hi }
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

  /**
   * Reads the waiting RawObservations in document order while their set-up
   * is known; one that names a set-up id not yet read waits (an
   * ObservationGroup may come before the InstrumentSetup it refers to), and
   * so does everything after it, until `all` at the end of the file.
   */
  private drain(all: boolean) {
    const q = this.pending
    while (this.pendingHead < q.length) {
      const p = q[this.pendingHead]!
      if (!all && p.setupId !== null && !this.setups.has(p.setupId)) break
      q[this.pendingHead++] = undefined as unknown as PendingObservation
      this.readRaw(p)
    }
    if (this.pendingHead === q.length) {
      q.length = 0
      this.pendingHead = 0
    } else if (this.pendingHead > 4096 && this.pendingHead * 2 > q.length) {
      q.splice(0, this.pendingHead)
      this.pendingHead = 0
    }
  }

  finish() {
    this.drain(true)
    // GNSS vectors are few: they are kept until the end, as a vector may name a set-up that comes after it
    for (const r of this.gnss.finish()) this.out.push(r)
    if (this.approximateFirst) {
      const first = this.approximateFirst
      this.warn(
        first,
        null,
        `${this.approximateCount} CgPoint(s) not marked pntSurv="control" give approximate positions only and are not held (first: '${clip(first.attrs.name ?? '')}')`,
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
      this.out.push({
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
