// GNSS vectors of a LandXML 1.2 Survey (LandXML.org, "LandXML-1.2.xsd", 2008)
// read into gnss_baseline records. The LandXML reader (./landxml.ts) hands each
// GPSSetup, GPSVector and free-standing GPSPosition of a Survey to this module
// and takes the records back once the whole file is read (a vector refers to
// its set-ups by IDREF, and a set-up may come after the vector).
//
// Element and attribute names as the LandXML 1.2 schema defines them (read in
// a schema-generated reader of LandXML-1.2.xsd, github.com/jlroviramartin/
// XsdProcessor, LandXml12/GPSSetup.cs, GPSVector.cs, GPSQCInfoLevel2.cs,
// Survey.cs):
// - Survey holds GPSSetup, GPSVector and GPSPosition elements.
// - GPSSetup: id (ID), antennaHeight, stationName; children GPSPosition
//   (pntRef, wgsLatitude/wgsLongitude/wgsHeight, a TargetPoint), TargetSetup,
//   FieldNote, Feature.
// - GPSVector: dX, dY, dZ (doubles), setupID_A and setupID_B (IDREFs to
//   GPSSetup ids), horizontalPrecision, verticalPrecision, purpose, setID,
//   times; children TargetPoint, GPSQCInfoLevel1, GPSQCInfoLevel2, FieldNote,
//   Feature.
// - GPSQCInfoLevel2: covarianceXX, covarianceXY, covarianceXZ, covarianceYY,
//   covarianceYZ, covarianceZZ (doubles), GPSSolnType, GPSSolnFreq, RMS,
//   ratio, referenceVariance, nbrSatellites, startTime, stopTime.
//
// What the schema does not say in words (it carries no annotation on these
// attributes), and how we read it — our interpretation, written beside each
// place it is used:
// - the six covariance terms are the elements of the 3×3 covariance matrix of
//   (dX, dY, dZ): XX, YY, ZZ are variances, the others covariances, in the
//   square of the file's linear unit (m² in a metric file). So
//   σX = √covarianceXX and ρXY = covarianceXY / (σX·σY).
// - the vector runs from the set-up of setupID_A to that of setupID_B:
//   (dX, dY, dZ) = X_B − X_A (common practice).
// - the vector is read as mark to mark; antennaHeight is kept as a record only
//   (a warning says so when it is not zero).
// - referenceVariance is not applied to the covariance (a warning says so
//   when it is not 1).

import { gnssBaseline } from '../models/gnss-baseline'
import type { BaselineVector, ObservationRecord } from '../types'
import { clip, parseNumber } from './units'

/** The few fields of a parsed element this module reads (the reader's own tree nodes fit it). */
export interface GnssElement {
  name: string
  attrs: Record<string, string>
  children: GnssElement[]
  line: number
}

/** How the module reports issues and learns the file's linear unit. */
export interface GnssSink<E extends GnssElement> {
  err(node: E, attr: string | null, message: string): void
  warn(node: E, attr: string | null, message: string): void
  /** an element this module does not read (the reader's own warning or refusal) */
  unknown(node: E): void
  /** metres per file unit and the unit's symbol, known once Units is read */
  unit(): { metres: number; symbol: string }
}

const COVARIANCE = ['covarianceXX', 'covarianceXY', 'covarianceXZ', 'covarianceYY', 'covarianceYZ', 'covarianceZZ'] as const
type CovarianceTerm = (typeof COVARIANCE)[number]
/** Children read past quietly: descriptive, or quality figures that do not weight the vector. */
const QUIET_SETUP = new Set(['TargetSetup', 'FieldNote', 'Feature'])
const QUIET_VECTOR = new Set(['GPSQCInfoLevel1', 'FieldNote', 'Feature'])
/** A sanity bound (common practice), the same as the CSV reader's longest baseline. */
const MAX_BASELINE_M = 1e6
const MAX_ANTENNA_HEIGHT_M = 1000

interface GnssSetup<E> { node: E; station: string }

/** Collects a file's GNSS set-ups and vectors; `finish()` turns the vectors into records. */
export class GnssVectors<E extends GnssElement> {
  private setups = new Map<string, GnssSetup<E>>()
  private vectors: E[] = []
  private antennaHeightNoted = false
  private referenceVarianceNoted = false

  constructor(private sink: GnssSink<E>) {}

  /** A GPSSetup: one receiver on one mark, referred to by its id. */
  setup(node: E): void {
    const id = (node.attrs.id ?? '').trim()
    if (id === '') this.sink.err(node, 'id', 'is missing: GNSS vectors refer to their set-ups by id')
    const positions = node.children.filter((c) => c.name === 'GPSPosition') as E[]
    for (const c of node.children as E[]) {
      if (c.name !== 'GPSPosition' && !QUIET_SETUP.has(c.name)) this.sink.unknown(c)
    }
    // The mark: the position's TargetPoint or pntRef, or the set-up's stationName; two different names are not guessed between.
    const names = new Set<string>()
    const stationName = (node.attrs.stationName ?? '').trim()
    if (stationName !== '') names.add(stationName)
    for (const p of positions) {
      const target = p.children.find((c) => c.name === 'TargetPoint')
      for (const n of [target?.attrs.pntRef, p.attrs.pntRef]) if (n && n.trim() !== '') names.add(n.trim())
    }
    if (names.size === 0) this.sink.err(node, 'stationName', 'names no mark (give stationName, or GPSPosition with pntRef or a TargetPoint pntRef)')
    if (names.size > 1) this.sink.err(node, null, `names two different marks (${[...names].map((n) => `'${clip(n)}'`).join(', ')}): give one`)
    if (node.attrs.antennaHeight !== undefined) {
      const p = parseNumber(node.attrs.antennaHeight)
      if (!p.ok) this.sink.err(node, 'antennaHeight', p.message)
      else if (Math.abs(p.value * this.sink.unit().metres) > MAX_ANTENNA_HEIGHT_M) this.sink.err(node, 'antennaHeight', `'${clip(node.attrs.antennaHeight)}' is implausibly large`)
      else if (p.value !== 0 && !this.antennaHeightNoted) {
        this.antennaHeightNoted = true
        this.sink.warn(node, 'antennaHeight', 'is kept as a record only: every GNSS vector of this file is read as mark to mark (ΔX ΔY ΔZ between the marks). If the vectors run between antennas, reduce them to the marks in the baseline processing first')
      }
    }
    if (id === '') return
    if (this.setups.has(id)) {
      this.sink.err(node, 'id', `GNSS set-up id '${clip(id)}' is used twice`)
      return
    }
    this.setups.set(id, { node, station: names.size === 1 ? [...names][0]! : '' })
  }

  /** A GPSVector, read once every set-up is known. */
  vector(node: E): void {
    this.vectors.push(node)
  }

  /** A GPSPosition outside a set-up: a point position, which Tiepoint does not adjust. */
  position(node: E): void {
    this.sink.warn(node, null, 'a GNSS point position is not used by Tiepoint (it adjusts vectors between marks); ignored. Hold the point as control if it should fix the network')
  }

  /** The vectors as gnss_baseline records (none are returned for a vector with an issue; the issues go to the sink). */
  finish(): ObservationRecord[] {
    const out: ObservationRecord[] = []
    for (const v of this.vectors) {
      const r = this.read(v)
      if (r) out.push(r)
    }
    return out
  }

  private read(node: E): ObservationRecord | null {
    const { metres, symbol } = this.sink.unit()
    let ok = true
    const ends: string[] = []
    for (const attr of ['setupID_A', 'setupID_B'] as const) {
      const id = (node.attrs[attr] ?? '').trim()
      const setup = id === '' ? undefined : this.setups.get(id)
      if (id === '') this.sink.err(node, attr, 'is missing: a vector names the GPSSetup at each end')
      else if (!setup) this.sink.err(node, attr, `refers to GNSS set-up '${clip(id)}', which the file does not define`)
      if (!setup || setup.station === '') ok = false // a nameless set-up is reported on the set-up
      else ends.push(setup.station)
    }
    if (ok && ends[0] === ends[1]) {
      this.sink.err(node, null, `joins mark '${clip(ends[0]!)}' to itself`)
      ok = false
    }
    // The vector's own TargetPoint, when it names a mark, must be the far end (setupID_B); a contradiction is not guessed past.
    const target = node.children.find((c) => c.name === 'TargetPoint')
    const targetName = (target?.attrs.pntRef ?? '').trim()
    if (ok && target && targetName !== '' && targetName !== ends[1]) {
      this.sink.err(target as E, 'pntRef', `'${clip(targetName)}' is not the mark of setupID_B ('${clip(ends[1]!)}')`)
      ok = false
    }
    for (const c of node.children as E[]) {
      if (c.name !== 'TargetPoint' && c.name !== 'GPSQCInfoLevel2' && !QUIET_VECTOR.has(c.name)) this.sink.unknown(c)
    }

    const d: number[] = []
    for (const attr of ['dX', 'dY', 'dZ'] as const) {
      const v = this.numberAttr(node, attr, 'is missing: a vector needs dX, dY and dZ')
      if (v === null) ok = false
      else d.push(v * metres)
    }
    if (d.length === 3 && Math.hypot(...d) > MAX_BASELINE_M) {
      this.sink.err(node, null, `is too long for a baseline (over ${MAX_BASELINE_M / 1000} km)`)
      ok = false
    }

    const qc = node.children.filter((c) => c.name === 'GPSQCInfoLevel2') as E[]
    if (qc.length === 0) {
      this.sink.err(node, null, 'has no GPSQCInfoLevel2 with covarianceXX … covarianceZZ: a vector needs its own covariance (no instrument profile stands in for it)')
      return null
    }
    if (qc.length > 1) {
      this.sink.err(qc[1]!, null, 'a vector has one covariance: give one GPSQCInfoLevel2')
      return null
    }
    const cov = this.covariance(qc[0]!, metres)
    if (!ok || d.length !== 3 || !cov) return null

    const vector: BaselineVector = { d: d as [number, number, number], sigma: cov.sigma, correlation: cov.correlation }
    const record: ObservationRecord = {
      line: node.line, kind: 'gnss_baseline', at: ends[0]!, from: null, to: ends[1]!, value: Math.hypot(...d), sigma: null,
      hi: null, ht: null, set: null, lengthKm: null, note: (node.attrs.purpose ?? '').trim(), unit: symbol, vector,
    }
    // the model's own checks (|ρ| < 1, positive-definite covariance), so the reader and the engine refuse the same vectors
    const issues = gnssBaseline.validate(record)
    if (issues.length) {
      for (const i of issues) this.sink.err(i.column === 'sigma' || i.column === 'correlation' ? qc[0]! : node, null, i.message)
      return null
    }
    return record
  }

  /** A number attribute that must be there, or null with the problem reported (`missing` when absent). */
  private numberAttr(node: E, attr: string, missing: string): number | null {
    const text = node.attrs[attr]
    if (text === undefined) {
      this.sink.err(node, attr, missing)
      return null
    }
    const p = parseNumber(text)
    if (!p.ok) {
      this.sink.err(node, attr, p.message)
      return null
    }
    return p.value
  }

  /**
   * σX σY σZ (metres) and ρXY ρXZ ρYZ from the six covariance terms of
   * GPSQCInfoLevel2, given in the file's linear unit squared:
   * σi = √(Cii)·k and ρij = Cij / √(Cii·Cjj), k = metres per file unit.
   */
  private covariance(qc: E, metres: number): { sigma: [number, number, number]; correlation: [number, number, number] } | null {
    const c = {} as Record<CovarianceTerm, number>
    let ok = true
    for (const attr of COVARIANCE) {
      const v = this.numberAttr(qc, attr, 'is missing: the vector\'s covariance needs all six terms (covarianceXX, XY, XZ, YY, YZ, ZZ)')
      if (v === null) ok = false
      else c[attr] = v
    }
    if (!ok) return null
    for (const attr of ['covarianceXX', 'covarianceYY', 'covarianceZZ'] as const) {
      if (!(c[attr] > 0)) {
        this.sink.err(qc, attr, `'${clip(qc.attrs[attr]!)}': a variance must be positive`)
        ok = false
      }
    }
    if (!ok) return null
    const rv = qc.attrs.referenceVariance
    if (rv !== undefined && !this.referenceVarianceNoted) {
      const p = parseNumber(rv)
      if (!(p.ok && p.value === 1)) {
        this.referenceVarianceNoted = true
        this.sink.warn(qc, 'referenceVariance', `'${clip(rv)}' is not applied: the covariance terms are used as written`)
      }
    }
    const sx = Math.sqrt(c.covarianceXX); const sy = Math.sqrt(c.covarianceYY); const sz = Math.sqrt(c.covarianceZZ)
    return {
      sigma: [sx * metres, sy * metres, sz * metres],
      correlation: [c.covarianceXY / (sx * sy), c.covarianceXZ / (sx * sz), c.covarianceYZ / (sy * sz)],
    }
  }
}
