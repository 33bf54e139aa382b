// Types shared by the adjustment engine, its readers and its callers (server,
// worker, CLI). Units inside the engine are SI: metres and radians. Conversion
// to feet, gon, arcseconds etc. happens only at the edges (readers, reports).

// The kinds come from the model registry (one file per kind in ./models).
import type { ObservationKind } from './models/registry'
export type { ObservationKind }

/** A problem found in an input file: where (line, column) and why. */
export interface ReadIssue {
  line: number
  column: string
  message: string
}

/** A control row: known coordinates of a station, fixed (sd null) or weighted. */
export interface ControlRecord {
  line: number
  station: string
  east: number | null
  north: number | null
  height: number | null
  /** standard deviations in metres; null means held fixed */
  sdEast: number | null
  sdNorth: number | null
  sdHeight: number | null
}

/** One measured quantity, already converted to metres / radians. */
export interface ObservationRecord {
  /** 1-based source line (or element ordinal for XML) */
  line: number
  kind: ObservationKind
  /** instrument station */
  at: string
  /** backsight for angles; empty otherwise */
  from: string | null
  /** target station (for height_difference: the forward point, at = back point) */
  to: string
  /** metres for lengths and height differences, radians for angles */
  value: number
  /** a-priori standard deviation in metres or radians; null = from the instrument profile */
  sigma: number | null
  /** instrument and target heights above the marks, metres (one unit rule: see io/README.md) */
  hi: number | null
  ht: number | null
  /** direction-set name; null = one set per station */
  set: string | null
  /** levelling length in km (height_difference) */
  lengthKm: number | null
  note: string
  /** excluded observations are carried through and reported but not used */
  excluded?: boolean
  /** caller's key (e.g. database id), echoed in results */
  id?: number | string
  /**
   * the unit the source wrote the value in (m, ft, usft, deg, dms, gon, rad;
   * LandXML may also give mm, cm, km, in); `value` is still SI. Kept for the record only.
   */
  unit?: string
  /** gnss_baseline only: the vector and its covariance (`value` holds the vector's length) */
  vector?: BaselineVector
}

/**
 * A GNSS baseline: ΔX ΔY ΔZ from `at` to `to` in metres, Earth-centred
 * Earth-fixed in the datum of the project's CRS, mark to mark; σX σY σZ in
 * metres; correlations ρXY ρXZ ρYZ (null = uncorrelated). The 3×3 covariance
 * must be positive definite (checked by the model, ./models/gnss-baseline).
 */
export interface BaselineVector {
  d: [number, number, number]
  sigma: [number, number, number]
  correlation: [number, number, number] | null
}

/** A-priori precision of an instrument and its set-up. */
export interface InstrumentProfile {
  distanceMm: number
  distancePpm: number
  directionArcsec: number
  zenithArcsec: number
  centeringInstrumentMm: number
  centeringTargetMm: number
  levellingMmPerSqrtKm: number
}

export type ReadResult =
  | { ok: true; controls: ControlRecord[]; observations: ObservationRecord[]; warnings: ReadIssue[] }
  | { ok: false; errors: ReadIssue[]; warnings: ReadIssue[] }

/** What a batched reader returns once its batches are spent: everything of a ReadResult but the observations. */
export type ReadEnd =
  | { ok: true; controls: ControlRecord[]; warnings: ReadIssue[] }
  | { ok: false; errors: ReadIssue[]; warnings: ReadIssue[] }

/**
 * A reader that hands its observation records out in batches as it reads, so
 * a large file never has all of them in memory at once. Batches stop as soon
 * as an error is found (the reading goes on, to list every error); the
 * return value says whether the file was good. A consumer that wrote batches
 * must discard them when it is not.
 */
export type RecordBatches = Generator<ObservationRecord[], ReadEnd, void>

// ---- adjustment engine: settings and results ----------------------------------

export interface AdjustSettings {
  /**
   * 'as-stored': control held as stored with it (fixed when its σ is blank,
   * weighted otherwise), the same words as the app's run setting; 'free': inner
   * constraints on all stations. 'as-given' is the former name of 'as-stored',
   * still accepted (validateSettings turns it into 'as-stored').
   */
  datum: 'as-stored' | 'free' | 'as-given'
  /** scale precisions by the a-posteriori σ̂0² (default) or by the a-priori σ0 = 1 */
  scaling: 'a-posteriori' | 'a-priori'
  confidence: number
  alpha: number
  alpha0: number
  beta0: number
  maxIterations: number
  weakRedundancy: number
}

export interface ApproximateCoordinate {
  station: string
  east?: number
  north?: number
  height?: number
}

/**
 * The projected CRS of the control coordinates. When given, measured (ground)
 * horizontal and slope-reduced distances are reduced to the grid before the
 * plane adjustment; without it the plane is local and nothing is reduced.
 */
export interface ProjectionInput {
  /** proj4 definition, e.g. '+proj=utm +zone=33 +ellps=GRS80 +units=m' */
  proj4: string
  /** geoid separation N for the whole network (ellipsoidal height = height + N); default 0 */
  geoidSeparationM?: number
  /** point scale factor of a line by Simpson's rule over ends and mid-point (default) or at the mid-point */
  scaleFactorMethod?: 'simpson' | 'midpoint'
}

export interface AdjustInput {
  controls: ControlRecord[]
  observations: ObservationRecord[]
  profile?: InstrumentProfile
  approximate?: ApproximateCoordinate[]
  projection?: ProjectionInput
  /** coefficient of refraction k and its σ for zenith angles; default 0.13 ± 0.05 (common practice) */
  refraction?: { k: number; sigmaK: number }
  /** local plane only: the height (m) the plane lies at; ground distances are reduced to it */
  projectHeightM?: number | null
}

/**
 * How observations were reduced to the plane: to the grid of a projected CRS,
 * or on a local plane to the project height (applied: false on a local plane
 * without one — distances used as measured, slope distances at their marks' mean height).
 */
export interface GridReductionSummary {
  applied: boolean
  method: 'simpson' | 'midpoint' | null
  /** sphere radius of a local plane, metres (projected: the ellipsoid's normal-section radius per line) */
  radiusM: number | null
  geoidSeparationM: number | null
  /** local plane: the project height distances were reduced to */
  projectHeightM: number | null
  /** number of distances reduced */
  distances: number
  /** directions, angles and azimuths reduced to grid chords (projected CRS) */
  directions: number
  /** largest arc-to-chord correction of a direction, arcseconds (projected CRS) */
  maxArcToChordArcsec: number | null
  meanCombinedFactor: number | null
  minCombinedFactor: number | null
  maxCombinedFactor: number | null
  meanScaleFactor: number | null
  meanElevationFactor: number | null
  /** stations without any known height: the mean of the known heights (or 0) stood in */
  heightsAssumed: string[]
}

export interface Ellipse {
  semiMajor: number
  semiMinor: number
  /** azimuth of the major axis, degrees clockwise from grid north, [0, 180) */
  azimuthDeg: number
}

export interface StationResult {
  name: string
  east: number | null
  north: number | null
  height: number | null
  sdEast: number | null
  sdNorth: number | null
  sdHeight: number | null
  /** 1σ ellipse */
  ellipse: Ellipse | null
  /** ellipse at the settings' confidence (95 % by default) */
  ellipse95: Ellipse | null
  fixed: boolean
  kind: 'control' | 'new'
  controlled: { east: boolean; north: boolean; height: boolean }
}

export interface ObservationResult {
  id: number | string | null
  line: number
  /** 'control' rows are coordinate observations of weighted control points */
  kind: ObservationKind | 'control'
  /** coordinate component of a 'control' row, or ΔX/ΔY/ΔZ component of a gnss_baseline row */
  component: ResultComponent | null
  at: string
  from: string | null
  to: string
  /** observed and adjusted value: metres, or decimal degrees for angles */
  observed: number
  adjusted: number | null
  valueUnit: 'm' | 'deg'
  /** residual = adjusted − observed, σ and MDB: metres, or arcseconds for angles */
  residual: number | null
  sigma: number | null
  residualUnit: 'm' | 'arcsec'
  redundancy: number | null
  w: number | null
  flagged: boolean
  tau: number | null
  tauFlagged: boolean
  mdb: number | null
  /**
   * largest shift (m) that an undetected MDB-sized error would cause at the
   * stations this observation connects (external reliability at bounded cost)
   */
  mdbEffect: number | null
  excluded: boolean
  weak: boolean
  /** why an observation did not enter the adjustment, when it did not */
  remark: string | null
  /**
   * distances reduced to the grid (projected CRS only): grid = ground ·
   * combinedFactor, combinedFactor = elevationFactor · scaleFactor. Residual, σ
   * and MDB stay in ground metres.
   */
  combinedFactor?: number
  elevationFactor?: number
  scaleFactor?: number
  /** gnss_baseline component rows only */
  vectorTest?: VectorTest
}

export type ResultComponent = 'east' | 'north' | 'height' | 'dx' | 'dy' | 'dz'

/**
 * The test of a whole GNSS vector, repeated on each of its three component rows:
 * T = vᵀ Qvv⁺ v / σ0² against χ²(3) (or F when σ̂0 is used) at the run's α0; the
 * residual vector in the local east/north/up of the vector's `at` station.
 */
export interface VectorTest {
  statistic: number
  critical: number
  distribution: 'chi2' | 'F'
  flagged: boolean
  residualEnu: [number, number, number]
}

export interface RelativeResult {
  from: string
  to: string
  distance: number
  semiMajor: number
  semiMinor: number
  azimuthDeg: number
  semiMajor95: number
  sdDistance: number
}

export interface GlobalTest {
  statistic: number
  lower: number
  upper: number
  /** null: not applicable (no redundancy, nothing is checked) */
  passed: boolean | null
}

export interface NetworkSummary {
  dof: number
  sigma0: number | null
  globalTest: GlobalTest
  counts: { n: number; u: number; r: number }
  iterations: number
  tauCritical: number | null
  conditionEstimate: number
  dominant: string | null
}

export interface AdjustmentResult {
  converged: boolean
  iterations: number
  dof: number
  sigma0: number | null
  globalTest: GlobalTest
  stations: StationResult[]
  observations: ObservationResult[]
  plane?: NetworkSummary
  height?: NetworkSummary
  relative: RelativeResult[]
  health: { conditionEstimate: number; dominant: string | null }
  counts: { n: number; u: number; r: number }
  critical: { w: number; tau: number | null; delta0: number }
  settings: AdjustSettings
  /** ground-to-grid reduction of distances (set by the plane and height adjustment; absent for a combined 3D run, which reduces nothing — see network3d) */
  gridReduction?: GridReductionSummary
  /** the coefficient of refraction used for zenith angles, its σ, and how many zeniths used it */
  refraction?: { k: number; sigmaK: number; zeniths: number }
  /** set when the run had GNSS baselines: the combined 3D adjustment (plane and height are then absent) */
  network3d?: Network3dSummary
}

/**
 * The combined 3D adjustment of GNSS baselines with terrestrial observations
 * (./network3d): its statistics as for one network, and what the model assumed.
 */
export interface Network3dSummary extends NetworkSummary {
  /** GNSS baselines used */
  vectors: number
  /** heights H = h − N with this one geoid separation N (metres) */
  geoidSeparationM: number
  /** the ellipsoid of the project's CRS (inverseFlattening null for a sphere) */
  ellipsoid: { a: number; inverseFlattening: number | null }
  /** the ellipsoid normal stands for the plumb line: no deflection of the vertical applied (for the report) */
  deflectionOfVerticalIgnored: true
  /** stations with no height before the adjustment: the mean known height stood in as the start (the adjustment then determines it) */
  heightsAssumed: string[]
  /** which distribution the vector tests used: χ²(q) with σ0 = 1, or F(q, r − q) with the variance factor estimated */
  vectorTest: 'chi2' | 'F'
}

export type AdjustFailureCode = 'singular' | 'not_converged' | 'unplaceable' | 'input'

export type AdjustOutcome =
  | { ok: true; result: AdjustmentResult }
  | { ok: false; code: AdjustFailureCode; reason: string; stations?: string[] }
