// adjustNetwork: builds the plane (E, N + one orientation per direction set) and
// the 1D height network from the observations, computes approximate values,
// solves each by Gauss–Newton with pivoted Householder QR (./lsq, ./qr), and
// derives the statistics: σ̂0² = vᵀPv / r, two-sided χ² global test, redundancy
// numbers r_i = qvv_i·p_i, Baarda's w-test, Pope's τ-test, minimal detectable
// bias and its effect on the coordinates, absolute and relative error ellipses.
//
// Sources: Baarda, W. (1968) A testing procedure for use in geodetic networks,
// Netherlands Geodetic Commission 2(5) (w-test, MDB = σ·δ0/√r_i, external
// reliability); Pope, A.J. (1976) The statistics of residuals and the detection
// of outliers, NOAA TR NOS 65 NGS 1; Ghilani, C.D. (2017) Adjustment Computations,
// 6th ed., Wiley (observation equations for directions, angles, distances,
// azimuths and height differences; error ellipses — from memory).
// Trigonometric heights use the combined curvature and refraction term
// (1 − k)·D²/(2R) with k = 0.13, R = 6 371 km (common practice).

import { localMdbEffect } from './cofactor'
import { approximateHeights, approximatePlane, type XY } from './approx'
import { elevationFactor, GridProjection } from './grid'
import { azimuth, ellipseFromCovariance, RAD_TO_DEG, RHO_ARCSEC, wrapPi } from './geometry'
import { solveNonlinear, type LinearRow, type NonlinearProblem, type SolveOptions } from './lsq'
import {
  angleSigma,
  DEFAULT_PROFILE,
  directionSigma,
  distanceSigma,
  levellingSigma,
  zenithSigma,
} from './sigma'
import { chiSquareBounds, delta0 as delta0Of, ellipseScale, tauCritical, wCritical } from './stats'
import type {
  AdjustInput,
  AdjustOutcome,
  AdjustSettings,
  AdjustmentResult,
  ControlRecord,
  GridReductionSummary,
  InstrumentProfile,
  NetworkSummary,
  ObservationRecord,
  ObservationResult,
  RelativeResult,
  StationResult,
} from './types'

export const DEFAULT_SETTINGS: AdjustSettings = {
  datum: 'as-given',
  scaling: 'a-posteriori',
  confidence: 0.95,
  alpha: 0.05,
  alpha0: 0.001,
  beta0: 0.8,
  maxIterations: 20,
  weakRedundancy: 0.2,
}

/** Convergence: 0.01 mm on coordinates, and the angle that subtends 0.01 mm at 1 km. */
const TOL_LENGTH = 1e-5
const TOL_ANGLE = 1e-8
const EARTH_RADIUS = 6_371_000
const REFRACTION_K = 0.13
/** below this redundancy number an observation counts as uncontrolled (no w, no MDB) */
const UNCONTROLLED = 1e-6

export interface PhaseTimings {
  approximationMs: number
  /** sparse path: ordering and symbolic analysis (once per network); part of factorizationMs */
  orderingMs: number
  factorizationMs: number
  statisticsMs: number
}

type Failure = Extract<AdjustOutcome, { ok: false }>
class Stop {
  constructor(readonly failure: Failure) {}
}
const fail = (code: Failure['code'], reason: string, stations?: string[]): never => {
  throw new Stop(stations ? { ok: false, code, reason, stations } : { ok: false, code, reason })
}

/** `options.factorization`: 'auto' (sparse) or 'dense' (the oracle the tests compare with). */
export function adjustNetwork(input: AdjustInput, settings: Partial<AdjustSettings> = {}, options: SolveOptions = {}): AdjustOutcome {
  return adjustNetworkTimed(input, settings, options).outcome
}

/** Same as adjustNetwork, with the time spent per phase (for the benchmark). */
export function adjustNetworkTimed(
  input: AdjustInput,
  settings: Partial<AdjustSettings> = {},
  options: SolveOptions = {},
): { outcome: AdjustOutcome; timings: PhaseTimings } {
  const timings: PhaseTimings = { approximationMs: 0, orderingMs: 0, factorizationMs: 0, statisticsMs: 0 }
  try {
    const s = validateSettings({ ...DEFAULT_SETTINGS, ...settings })
    return { outcome: { ok: true, result: run(input, s, timings, options) }, timings }
  } catch (e) {
    if (e instanceof Stop) return { outcome: e.failure, timings }
    const msg = e instanceof Error ? e.message : String(e)
    return { outcome: { ok: false, code: 'input', reason: `the input could not be processed: ${msg}` }, timings }
  }
}

function validateSettings(s: AdjustSettings): AdjustSettings {
  const prob = (v: number, name: string) => {
    if (!(v > 0 && v < 1)) fail('input', `setting ${name} must lie between 0 and 1, got ${v}`)
  }
  prob(s.confidence, 'confidence')
  prob(s.alpha, 'alpha')
  prob(s.alpha0, 'alpha0')
  prob(s.beta0, 'beta0')
  if (!(Number.isInteger(s.maxIterations) && s.maxIterations >= 1)) fail('input', 'setting maxIterations must be a positive integer')
  if (s.datum !== 'as-given' && s.datum !== 'free') fail('input', `setting datum must be 'as-given' or 'free'`)
  if (s.scaling !== 'a-posteriori' && s.scaling !== 'a-priori') fail('input', `setting scaling must be 'a-posteriori' or 'a-priori'`)
  return s
}

// ---- internal model --------------------------------------------------------------

type PlaneDef =
  | { type: 'direction'; out: number; at: number; to: number; set: number; value: number }
  | { type: 'angle'; out: number; at: number; from: number; to: number; value: number }
  | { type: 'distance'; out: number; at: number; to: number; value: number }
  | { type: 'azimuth'; out: number; at: number; to: number; value: number }
  | { type: 'coord'; out: number; st: number; comp: 0 | 1; value: number }

interface PlaneRowDef {
  def: PlaneDef
  sigma: number
  /** model residual (m or rad) → output residual (m or arcsec) */
  outScale: number
}

interface HeightRowDef {
  out: number
  at: number
  to: number
  /** observed height difference (or height for coord rows: at = to = station) */
  value: number
  coord: boolean
  sigma: number
  outScale: number
}

function run(input: AdjustInput, settings: AdjustSettings, timings: PhaseTimings, solveOptions: SolveOptions = {}): AdjustmentResult {
  const profile = input.profile ?? DEFAULT_PROFILE
  validateProfile(profile)
  const free = settings.datum === 'free'
  const outputs: ObservationResult[] = []
  const obsList = input.observations
  const controlByName = new Map<string, ControlRecord>()
  for (const c of input.controls) {
    if (!c.station) fail('input', `line ${c.line}, column at: control row names no station`)
    if (controlByName.has(c.station)) fail('input', `line ${c.line}, column at: station ${c.station} is given as control twice`)
    for (const [k, v] of Object.entries({ east: c.east, north: c.north, height: c.height, sdEast: c.sdEast, sdNorth: c.sdNorth, sdHeight: c.sdHeight })) {
      if (v !== null && !Number.isFinite(v)) fail('input', `line ${c.line}, column ${k}: not a finite number`)
      if (k.startsWith('sd') && v !== null && v <= 0) fail('input', `line ${c.line}, column sigma: standard deviation must be positive`)
    }
    if ((c.east === null) !== (c.north === null)) fail('input', `line ${c.line}, column value: give both east and north, or neither`)
    controlByName.set(c.station, c)
  }
  for (const o of obsList) validateObservation(o)

  for (const o of obsList) {
    outputs.push({
      id: o.id ?? null,
      line: o.line,
      kind: o.kind,
      component: null,
      at: o.at,
      from: o.from,
      to: o.to,
      observed: isAngular(o.kind) ? o.value * RAD_TO_DEG : o.value,
      adjusted: null,
      valueUnit: isAngular(o.kind) ? 'deg' : 'm',
      sigma: null,
      residualUnit: isAngular(o.kind) ? 'arcsec' : 'm',
      ...notYetTested(),
      excluded: o.excluded === true,
      remark: o.excluded === true ? 'excluded by the user' : null,
    })
  }
  const used = obsList.map((o, i) => ({ o, i })).filter((x) => !x.o.excluded)

  // ---- reductions: slope distances with zenith angles --------------------------
  const zeniths = new Map<string, { o: ObservationRecord; i: number }[]>()
  const slopes = new Map<string, { o: ObservationRecord; i: number }[]>()
  for (const x of used) {
    const key = `${x.o.at}\u0000${x.o.to}`
    if (x.o.kind === 'zenith') zeniths.set(key, [...(zeniths.get(key) ?? []), x])
    if (x.o.kind === 'slope_distance') slopes.set(key, [...(slopes.get(key) ?? []), x])
  }

  // ---- station indexing -----------------------------------------------------------
  const { names: planeNames, index: planeIdx, add: pIdx } = stationIndex()
  const { names: heightNames, index: heightIdx, add: hIdx } = stationIndex()

  const planeDefs: { def: PlaneDef; rec: ObservationRecord; zenith?: number; slope?: number; cf?: number }[] = []
  const heightDefs: { out: number; at: number; to: number; value: number; rec: ObservationRecord; slope?: number; zenith?: number }[] = []
  const setKeys = new Map<string, number>()
  const setStationName: string[] = []
  const setLabel: string[] = []
  for (const { o, i } of used) {
    switch (o.kind) {
      case 'direction': {
        const key = `${o.at}\u0000${o.set ?? ''}`
        let set = setKeys.get(key)
        if (set === undefined) {
          set = setKeys.size
          setKeys.set(key, set)
          setStationName.push(o.at)
          setLabel.push(o.set ?? '')
        }
        planeDefs.push({ def: { type: 'direction', out: i, at: pIdx(o.at), to: pIdx(o.to), set, value: o.value }, rec: o })
        break
      }
      case 'angle':
        planeDefs.push({ def: { type: 'angle', out: i, at: pIdx(o.at), from: pIdx(o.from!), to: pIdx(o.to), value: o.value }, rec: o })
        break
      case 'horizontal_distance':
        planeDefs.push({ def: { type: 'distance', out: i, at: pIdx(o.at), to: pIdx(o.to), value: o.value }, rec: o })
        break
      case 'azimuth':
        planeDefs.push({ def: { type: 'azimuth', out: i, at: pIdx(o.at), to: pIdx(o.to), value: o.value }, rec: o })
        break
      case 'slope_distance': {
        const zs = zeniths.get(`${o.at}\u0000${o.to}`)
        if (!zs) {
          outputs[i].remark = 'not used: no zenith angle from the same station to the same target to reduce it'
          break
        }
        const z = circularMean(zs.map((x) => x.o.value))
        planeDefs.push({
          def: { type: 'distance', out: i, at: pIdx(o.at), to: pIdx(o.to), value: o.value * Math.sin(z) },
          rec: o,
          zenith: z,
          slope: o.value,
        })
        break
      }
      case 'zenith': {
        const ss = slopes.get(`${o.at}\u0000${o.to}`)
        if (!ss) {
          outputs[i].remark = 'not used: no slope distance from the same station to the same target'
          break
        }
        const sd = ss.reduce((a, x) => a + x.o.value, 0) / ss.length
        const hd = sd * Math.sin(o.value)
        const dh = sd * Math.cos(o.value) + (o.hi ?? 0) - (o.ht ?? 0) + ((1 - REFRACTION_K) * hd * hd) / (2 * EARTH_RADIUS)
        heightDefs.push({ out: i, at: hIdx(o.at), to: hIdx(o.to), value: dh, rec: o, slope: sd, zenith: o.value })
        break
      }
      case 'height_difference':
        heightDefs.push({ out: i, at: hIdx(o.at), to: hIdx(o.to), value: o.value, rec: o })
        break
    }
  }

  const ta = performance.now()
  // ---- plane network ----------------------------------------------------------------
  const nP = planeNames.length
  const pControl = planeNames.map((s) => {
    const c = controlByName.get(s)
    return c && c.east !== null && c.north !== null ? c : null
  })
  const approxBy = new Map((input.approximate ?? []).map((a) => [a.station, a]))
  let planeCoords: XY[] = []
  let orientation: Float64Array = new Float64Array(0)
  if (nP > 0) {
    if (!free) planeDatumCheck(planeNames, pControl, planeDefs.map((p) => p.def))
    stationLegCheck(planeNames, pControl, planeDefs.map((p) => p.def), free)
    const known = new Map<string, XY>()
    planeNames.forEach((s, k) => {
      const c = pControl[k]
      if (c) known.set(s, { e: c.east!, n: c.north! })
      else {
        const a = approxBy.get(s)
        if (a && a.east !== undefined && a.north !== undefined) known.set(s, { e: a.east, n: a.north })
      }
    })
    const ap = approximatePlane({
      stations: planeNames,
      known,
      setCount: setKeys.size,
      directions: planeDefs.flatMap((p) => (p.def.type === 'direction' ? [{ at: planeNames[p.def.at], to: planeNames[p.def.to], set: p.def.set, value: p.def.value }] : [])),
      angles: planeDefs.flatMap((p) => (p.def.type === 'angle' ? [{ at: planeNames[p.def.at], from: planeNames[p.def.from], to: planeNames[p.def.to], value: p.def.value }] : [])),
      distances: planeDefs.flatMap((p) => (p.def.type === 'distance' ? [{ at: planeNames[p.def.at], to: planeNames[p.def.to], value: p.def.value }] : [])),
      azimuths: planeDefs.flatMap((p) => (p.def.type === 'azimuth' ? [{ at: planeNames[p.def.at], to: planeNames[p.def.to], value: p.def.value }] : [])),
      seedIfEmpty: free,
    })
    if (ap.unplaced.length) {
      fail(
        'unplaceable',
        `approximate coordinates could not be computed for ${ap.unplaced.join(', ')}: give approximate coordinates or add observations that tie ${ap.unplaced.length > 1 ? 'them' : 'it'} to placed stations`,
        ap.unplaced,
      )
    }
    planeCoords = planeNames.map((s) => ap.coords.get(s)!)
    orientation = ap.orientation
  }

  // ---- height network -------------------------------------------------------------
  const nH = heightNames.length
  const hControl = heightNames.map((s) => {
    const c = controlByName.get(s)
    return c && c.height !== null ? c : null
  })
  let heights: number[] = []
  if (nH > 0) {
    if (!free && !hControl.some((c) => c)) {
      fail('singular', 'no height datum: hold at least one benchmark height fixed or weighted, or choose a free network')
    }
    const known = new Map<string, number>()
    heightNames.forEach((s, k) => {
      const c = hControl[k]
      if (c) known.set(s, c.height!)
      else if (approxBy.get(s)?.height !== undefined) known.set(s, approxBy.get(s)!.height!)
    })
    const ah = approximateHeights(
      heightNames,
      known,
      heightDefs.map((d) => ({ at: heightNames[d.at], to: heightNames[d.to], dh: d.value })),
      free,
    )
    if (ah.unplaced.length) {
      fail(
        'singular',
        `${ah.unplaced.join(', ')} ${ah.unplaced.length > 1 ? 'are' : 'is'} not connected by height differences to a benchmark`,
        ah.unplaced,
      )
    }
    heights = heightNames.map((s) => ah.heights.get(s)!)
  }
  timings.approximationMs = performance.now() - ta

  // ---- ground → grid (projected CRS only) ---------------------------------------
  const gridReduction = reduceToGrid(input, planeNames, planeCoords, planeDefs, outputs, (s) => {
    const k = heightIdx.get(s)
    if (k !== undefined) return heights[k]
    const c = controlByName.get(s)
    if (c && c.height !== null) return c.height
    return approxBy.get(s)?.height ?? null
  })

  // ---- a-priori σ (from the approximate geometry) --------------------------------
  const dist = (a: number, b: number) => Math.hypot(planeCoords[b].e - planeCoords[a].e, planeCoords[b].n - planeCoords[a].n)
  const planeRows: PlaneRowDef[] = planeDefs.map(({ def, rec, zenith, slope, cf = 1 }) => {
    switch (def.type) {
      case 'direction':
      case 'azimuth':
        return { def, sigma: rec.sigma ?? directionSigma(profile, dist(def.at, def.to)), outScale: RHO_ARCSEC }
      case 'angle':
        return {
          def,
          sigma: rec.sigma ?? angleSigma(profile, dist(def.at, def.from), dist(def.at, def.to), dist(def.from, def.to)),
          outScale: RHO_ARCSEC,
        }
      case 'distance': {
        // a grid distance is the ground one times cf: its σ scales by cf, and its
        // residual goes back to ground metres by 1/cf
        if (zenith === undefined) return { def, sigma: (rec.sigma ?? distanceSigma(profile, rec.value)) * cf, outScale: 1 / cf }
        const sS = rec.sigma ?? distanceSigma(profile, slope!)
        const sz = zenithSigma(profile)
        const sHd = Math.hypot(Math.sin(zenith) * sS, slope! * Math.cos(zenith) * sz)
        return { def, sigma: sHd * cf, outScale: 1 / (Math.sin(zenith) * cf) }
      }
      case 'coord':
        return { def, sigma: 1, outScale: 1 }
    }
  })
  const heightRows: HeightRowDef[] = heightDefs.map((d) => {
    const rec = d.rec
    if (d.slope !== undefined) {
      const sz = rec.sigma ?? zenithSigma(profile)
      const sS = distanceSigma(profile, d.slope)
      const sinZ = Math.sin(d.zenith!)
      const sigma = Math.hypot(Math.cos(d.zenith!) * sS, d.slope * sinZ * sz)
      return { out: d.out, at: d.at, to: d.to, value: d.value, coord: false, sigma, outScale: (-1 / (d.slope * sinZ)) * RHO_ARCSEC }
    }
    let sigma = rec.sigma
    if (sigma === null) {
      let len = rec.lengthKm
      if (len === null) {
        const a = planeIdx.get(heightNames[d.at])
        const b = planeIdx.get(heightNames[d.to])
        if (a !== undefined && b !== undefined) len = dist(a, b) / 1000
      }
      if (len === null || !(len > 0)) {
        fail('input', `line ${rec.line}, column length: a height difference without sigma needs the levelling length in km`)
      }
      sigma = levellingSigma(profile, len!)
    }
    return { out: d.out, at: d.at, to: d.to, value: d.value, coord: false, sigma, outScale: 1 }
  })

  // weighted control becomes coordinate observations (not in a free network)
  if (!free) {
    const addCoordOut = (c: ControlRecord, comp: 'east' | 'north' | 'height', value: number, sd: number) => {
      outputs.push({
        id: null,
        line: c.line,
        kind: 'control',
        component: comp,
        at: c.station,
        from: null,
        to: c.station,
        observed: value,
        adjusted: null,
        valueUnit: 'm',
        sigma: sd,
        residualUnit: 'm',
        ...notYetTested(),
        excluded: false,
        remark: null,
      })
      return outputs.length - 1
    }
    planeNames.forEach((s, k) => {
      const c = pControl[k]
      if (!c) return
      if (c.sdEast !== null) planeRows.push({ def: { type: 'coord', out: addCoordOut(c, 'east', c.east!, c.sdEast), st: k, comp: 0, value: c.east! }, sigma: c.sdEast, outScale: 1 })
      if (c.sdNorth !== null) planeRows.push({ def: { type: 'coord', out: addCoordOut(c, 'north', c.north!, c.sdNorth), st: k, comp: 1, value: c.north! }, sigma: c.sdNorth, outScale: 1 })
    })
    heightNames.forEach((s, k) => {
      const c = hControl[k]
      if (c && c.sdHeight !== null) {
        heightRows.push({ out: addCoordOut(c, 'height', c.height!, c.sdHeight), at: k, to: k, value: c.height!, coord: true, sigma: c.sdHeight, outScale: 1 })
      }
    })
  }

  // ---- solve ------------------------------------------------------------------------
  const stationOut = new Map<string, StationResult>()
  const relative: RelativeResult[] = []
  const d0 = delta0Of(settings.alpha0, settings.beta0)
  const wCrit = wCritical(settings.alpha0)
  let totalVpv = 0
  let totalR = 0
  let totalN = 0
  let totalU = 0
  let iterations = 0
  let health = { conditionEstimate: 0, dominant: null as string | null }

  const finish = (
    kind: 'plane' | 'height',
    problem: NonlinearProblem,
    rowOut: number[],
    rowScale: number[],
    stationCols: Int32Array[],
    names: string[],
  ) => {
    const outcome = solveNonlinear(problem, settings.maxIterations, solveOptions)
    if (!outcome.ok) {
      if (outcome.code === 'not_converged') {
        return fail('not_converged', `the ${kind} adjustment did not converge in ${outcome.iterations} iterations (last step ${outcome.maxStep.toExponential(2)} × tolerance): check for gross errors and approximate coordinates`)
      }
      const dep = outcome.dependent.map((j) => problem.labels[j])
      const st = [...new Set(outcome.dependent.map((j) => stationOfLabel(problem.labels[j])).filter((x): x is string => x !== null))]
      fail('singular', `the ${kind} network is singular: ${dep.slice(0, 6).join(', ')}${dep.length > 6 ? ` and ${dep.length - 6} more` : ''} cannot be determined from the observations; check how ${st.length ? st.join(', ') : 'these'} ${st.length > 1 ? 'are' : 'is'} tied to the rest of the network`, st)
    }
    if (!outcome.ok) return
    timings.factorizationMs += outcome.timings.factorizationMs
    timings.orderingMs += outcome.timings.orderingMs
    const t0 = performance.now()
    const { x, qxx, rows } = outcome
    const u = problem.u
    const n = rows.length
    const r = n - (u - outcome.datumDefect)
    let vpv = 0
    for (const row of rows) vpv += (row.misclosure / row.sigma) ** 2
    const sigma0Sq = r > 0 ? vpv / r : null
    const estimated = settings.scaling === 'a-posteriori' && sigma0Sq !== null
    const varFactor = estimated ? sigma0Sq! : 1
    const bounds = chiSquareBounds(settings.alpha, r)
    const tCrit = tauCritical(settings.alpha0, r)
    const sigma0 = sigma0Sq === null ? null : Math.sqrt(sigma0Sq)
    const isCoordCol = new Uint8Array(u)
    for (const c of stationCols) for (const j of c) if (j >= 0) isCoordCol[j] = 1

    const pending: { out: ObservationResult; cols: number[]; ac: number[]; k: number }[] = []
    rows.forEach((row, i) => {
      const out = outputs[rowOut[i]]
      const sc = rowScale[i]
      const ac = row.coef.map((c) => c / row.sigma)
      let qa = 0
      for (let p = 0; p < ac.length; p++) for (let q = 0; q < ac.length; q++) qa += ac[p] * qxx.get(row.cols[p], row.cols[q]) * ac[q]
      const ri = Math.min(Math.max(1 - qa, 0), 1)
      const v = -row.misclosure
      out.residual = v * sc
      out.sigma = row.sigma * Math.abs(sc)
      out.redundancy = ri
      out.weak = ri < settings.weakRedundancy
      if (out.kind === 'control') out.adjusted = out.observed + v
      else if (out.valueUnit === 'deg') out.adjusted = out.observed + (v * sc) / 3600
      else out.adjusted = out.observed + v * sc
      if (ri > UNCONTROLLED) {
        // w takes the sign of the residual as reported: rows converted with a
        // negative scale (a zenith carried by its trigonometric height) flip both.
        const w = (v / (row.sigma * Math.sqrt(ri))) * Math.sign(sc)
        out.w = w
        out.flagged = Math.abs(w) > wCrit
        if (sigma0 !== null && sigma0 > 0 && tCrit !== null) {
          out.tau = w / sigma0
          out.tauFlagged = Math.abs(out.tau) > tCrit
        }
        const mdb = (row.sigma * d0) / Math.sqrt(ri)
        out.mdb = mdb * Math.abs(sc)
        pending.push({ out, cols: row.cols, ac, k: mdb / row.sigma })
      }
    })

    // ---- external reliability (sparse engine): Δx = Qxx·ãᵀ·(MDB/σ) at the
    // stations the observation connects, from the selected entries (./cofactor)
    const stationOfCol = new Int32Array(u).fill(-1)
    stationCols.forEach((sc, st) => sc.forEach((j) => j >= 0 && (stationOfCol[j] = st)))
    for (const { out, cols, ac, k } of pending) out.mdbEffect = localMdbEffect(qxx, cols, ac, k, stationOfCol)
    // ---- end external reliability

    const scale95 = ellipseScale(settings.confidence, estimated, r)
    names.forEach((name, k) => {
      const cols = stationCols[k]
      const st = stationOut.get(name)!
      const q = (a: number, b: number) => (a >= 0 && b >= 0 ? qxx.get(a, b) * varFactor : 0)
      if (kind === 'plane') {
        const [ce, cn] = cols
        st.east = ce >= 0 ? x[ce] : pControl[k]!.east
        st.north = cn >= 0 ? x[cn] : pControl[k]!.north
        st.sdEast = Math.sqrt(Math.max(q(ce, ce), 0))
        st.sdNorth = Math.sqrt(Math.max(q(cn, cn), 0))
        if (ce >= 0 || cn >= 0) {
          st.ellipse = round(ellipseFromCovariance(q(ce, ce), q(cn, cn), q(ce, cn)))
          st.ellipse95 = round(ellipseFromCovariance(q(ce, ce), q(cn, cn), q(ce, cn), scale95))
        }
        st.controlled.east = ce < 0 || isControlled(pControl[k], 'sdEast', free)
        st.controlled.north = cn < 0 || isControlled(pControl[k], 'sdNorth', free)
      } else {
        const [ch] = cols
        st.height = ch >= 0 ? x[ch] : hControl[k]!.height
        st.sdHeight = Math.sqrt(Math.max(q(ch, ch), 0))
        st.controlled.height = ch < 0 || isControlled(hControl[k], 'sdHeight', free)
      }
    })

    if (kind === 'plane') {
      const seen = new Set<string>()
      for (const { def } of planeRows) {
        const pairs: [number, number][] =
          def.type === 'coord' ? [] : def.type === 'angle' ? [[def.at, def.from], [def.at, def.to]] : [[def.at, def.to]]
        for (const [a, b] of pairs) {
          const key = a < b ? `${a}:${b}` : `${b}:${a}`
          if (seen.has(key) || a === b) continue
          seen.add(key)
          const [ae, an] = stationCols[a]
          const [be, bn] = stationCols[b]
          if (ae < 0 && an < 0 && be < 0 && bn < 0) continue
          const q = (i: number, j: number) => (i >= 0 && j >= 0 ? qxx.get(i, j) : 0)
          const qee = q(be, be) + q(ae, ae) - 2 * q(ae, be)
          const qnn = q(bn, bn) + q(an, an) - 2 * q(an, bn)
          const qen = q(be, bn) + q(ae, an) - q(ae, bn) - q(be, an)
          const A = stationOut.get(names[a])!
          const B = stationOut.get(names[b])!
          const de = B.east! - A.east!
          const dn = B.north! - A.north!
          const d = Math.hypot(de, dn)
          const ge = de / d
          const gn = dn / d
          const e1 = ellipseFromCovariance(qee * varFactor, qnn * varFactor, qen * varFactor)
          relative.push({
            from: names[a],
            to: names[b],
            distance: d,
            semiMajor: e1.semiMajor,
            semiMinor: e1.semiMinor,
            azimuthDeg: round(e1).azimuthDeg,
            semiMajor95: e1.semiMajor * scale95,
            sdDistance: Math.sqrt(Math.max((ge * ge * qee + gn * gn * qnn + 2 * ge * gn * qen) * varFactor, 0)),
          })
        }
      }
    }

    const summary: NetworkSummary = {
      dof: r,
      sigma0,
      globalTest: { statistic: vpv, lower: bounds.lower, upper: bounds.upper, passed: r === 0 || (vpv >= bounds.lower && vpv <= bounds.upper) },
      counts: { n, u, r },
      iterations: outcome.iterations,
      tauCritical: tCrit,
      conditionEstimate: outcome.conditionEstimate,
      dominant: outcome.dominant === null ? null : problem.labels[outcome.dominant],
    }
    totalVpv += vpv
    totalR += r
    totalN += n
    totalU += u
    iterations = Math.max(iterations, outcome.iterations)
    if (summary.conditionEstimate > health.conditionEstimate) {
      health = { conditionEstimate: summary.conditionEstimate, dominant: summary.dominant }
    }
    timings.statisticsMs += performance.now() - t0 + outcome.timings.cofactorMs
    return summary
  }

  // station result shells, in order of first appearance
  const allNames: string[] = []
  const addName = (s: string) => {
    if (!stationOut.has(s)) {
      allNames.push(s)
      const c = controlByName.get(s)
      stationOut.set(s, {
        name: s,
        east: c?.east ?? null,
        north: c?.north ?? null,
        height: c?.height ?? null,
        sdEast: c && c.east !== null && !free ? c.sdEast ?? 0 : null,
        sdNorth: c && c.north !== null && !free ? c.sdNorth ?? 0 : null,
        sdHeight: c && c.height !== null && !free ? c.sdHeight ?? 0 : null,
        ellipse: null,
        ellipse95: null,
        fixed: !!c && !free && c.sdEast === null && c.sdNorth === null && c.sdHeight === null,
        kind: c ? 'control' : 'new',
        controlled: { east: !!c && c.east !== null && !free, north: !!c && c.north !== null && !free, height: !!c && c.height !== null && !free },
      })
    }
  }
  for (const c of input.controls) addName(c.station)
  for (const o of obsList) {
    if (o.from) addName(o.from)
    addName(o.at)
    addName(o.to)
  }

  let planeSummary: NetworkSummary | undefined
  let heightSummary: NetworkSummary | undefined
  if (nP > 0) {
    const built = buildPlaneProblem(planeNames, pControl, planeCoords, orientation, planeRows, setStationName, setLabel, free)
    planeSummary = finish('plane', built.problem, built.rowOut, built.rowScale, built.stationCols, planeNames)
  }
  if (nH > 0) {
    const built = buildHeightProblem(heightNames, hControl, heights, heightRows, free)
    heightSummary = finish('height', built.problem, built.rowOut, built.rowScale, built.stationCols, heightNames)
  }

  const bounds = chiSquareBounds(settings.alpha, totalR)
  const sigma0 = totalR > 0 ? Math.sqrt(totalVpv / totalR) : null
  const result: AdjustmentResult = {
    converged: true,
    iterations,
    dof: totalR,
    sigma0,
    globalTest: {
      statistic: totalVpv,
      lower: bounds.lower,
      upper: bounds.upper,
      passed: totalR === 0 || (totalVpv >= bounds.lower && totalVpv <= bounds.upper),
    },
    stations: allNames.map((s) => stationOut.get(s)!),
    observations: outputs,
    relative,
    health,
    counts: { n: totalN, u: totalU, r: totalR },
    critical: { w: wCrit, tau: planeSummary?.tauCritical ?? heightSummary?.tauCritical ?? null, delta0: d0 },
    settings,
    gridReduction,
  }
  if (planeSummary) result.plane = planeSummary
  if (heightSummary) result.height = heightSummary
  return result
}

/**
 * Reduces the plane distances from ground to grid in place (def.value ← value·cf)
 * when the input names a projected CRS; see ./grid for the factors. Lines are
 * placed by the approximate coordinates (a scale error of 1e-4 moves k by far
 * less than 1e-9), heights are the stations' known or approximate heights.
 */
function reduceToGrid(
  input: AdjustInput,
  names: string[],
  coords: XY[],
  defs: { def: PlaneDef; rec: ObservationRecord; cf?: number }[],
  outputs: ObservationResult[],
  heightOf: (station: string) => number | null,
): GridReductionSummary {
  const none: GridReductionSummary = {
    applied: false, method: null, radiusM: null, geoidSeparationM: null, distances: 0,
    meanCombinedFactor: null, minCombinedFactor: null, maxCombinedFactor: null, meanScaleFactor: null, meanElevationFactor: null,
    heightsAssumed: [],
  }
  const spec = input.projection
  if (!spec) return none
  if (typeof spec.proj4 !== 'string' || !spec.proj4.trim()) fail('input', 'projection, field proj4: the CRS definition is empty')
  const method = spec.scaleFactorMethod ?? 'simpson'
  if (method !== 'simpson' && method !== 'midpoint') fail('input', `projection, field scaleFactorMethod: must be 'simpson' or 'midpoint'`)
  const geoid = spec.geoidSeparationM ?? 0
  if (!Number.isFinite(geoid) || Math.abs(geoid) > 200) fail('input', 'projection, field geoidSeparationM: must be a number of metres between −200 and 200')
  if (spec.meanRadiusM !== undefined && !(Number.isFinite(spec.meanRadiusM) && spec.meanRadiusM > 6.3e6 && spec.meanRadiusM < 6.4e6)) {
    fail('input', 'projection, field meanRadiusM: must lie between 6 300 000 and 6 400 000 m')
  }
  let proj: GridProjection
  try {
    proj = new GridProjection(spec.proj4)
  } catch (e) {
    return fail('input', `projection, field proj4: ${e instanceof Error ? e.message : String(e)}`)
  }
  const distances = defs.filter((d) => d.def.type === 'distance')
  if (!distances.length || !coords.length) return { ...none, applied: true, method, geoidSeparationM: geoid }
  let radius = spec.meanRadiusM
  try {
    if (radius === undefined) {
      let e = 0
      let n = 0
      for (const c of coords) {
        e += c.e / coords.length
        n += c.n / coords.length
      }
      radius = proj.gaussianRadius(proj.toGeographic(e, n).lat)
    }
  } catch (e) {
    return fail('input', `projection: the network's centre ${e instanceof Error ? e.message : String(e)}; check that the control coordinates are in this CRS`)
  }
  const known = names.map(heightOf)
  const given = known.filter((h): h is number => h !== null)
  const fallback = given.length ? given.reduce((a, b) => a + b, 0) / given.length : 0
  const assumed = new Set<string>()
  const hAt = (k: number) => {
    if (known[k] !== null) return known[k]!
    assumed.add(names[k])
    return fallback
  }
  let sum = 0
  let sumK = 0
  let sumE = 0
  let min = Infinity
  let max = -Infinity
  for (const d of distances) {
    if (d.def.type !== 'distance') continue
    const a = coords[d.def.at]
    const b = coords[d.def.to]
    let k: number
    try {
      k = proj.lineScale(a.e, a.n, b.e, b.n, method)
    } catch (e) {
      return fail('input', `line ${d.rec.line}: ${e instanceof Error ? e.message : String(e)}; check that the control coordinates are in this CRS`)
    }
    const h = (hAt(d.def.at) + hAt(d.def.to)) / 2 + geoid
    const ef = elevationFactor(radius, h)
    const cf = ef * k
    d.def.value *= cf
    d.cf = cf
    const out = outputs[d.def.out]
    out.combinedFactor = cf
    out.elevationFactor = ef
    out.scaleFactor = k
    sum += cf
    sumK += k
    sumE += ef
    if (cf < min) min = cf
    if (cf > max) max = cf
  }
  const cnt = distances.length
  return {
    applied: true,
    method,
    radiusM: radius,
    geoidSeparationM: geoid,
    distances: cnt,
    meanCombinedFactor: sum / cnt,
    minCombinedFactor: min,
    maxCombinedFactor: max,
    meanScaleFactor: sumK / cnt,
    meanElevationFactor: sumE / cnt,
    heightsAssumed: [...assumed].sort(),
  }
}

function isControlled(c: ControlRecord | null, key: 'sdEast' | 'sdNorth' | 'sdHeight', free: boolean): boolean {
  return !!c && !free && c[key] !== null
}

function round(e: { semiMajor: number; semiMinor: number; azimuthDeg: number }) {
  // azimuths that round to 180.0 are the same axis as 0.0
  const az = e.azimuthDeg >= 180 - 1e-9 ? 0 : e.azimuthDeg
  return { semiMajor: e.semiMajor, semiMinor: e.semiMinor, azimuthDeg: az }
}

function stationOfLabel(label: string): string | null {
  const m = /^station (.+) \((east|north|height)\)$/.exec(label) ?? /at station (.+)$/.exec(label)
  return m ? m[1] : null
}

function isAngular(kind: string): boolean {
  return kind === 'direction' || kind === 'angle' || kind === 'zenith' || kind === 'azimuth'
}

function circularMean(a: number[]): number {
  let s = 0
  let c = 0
  for (const x of a) {
    s += Math.sin(x)
    c += Math.cos(x)
  }
  return Math.atan2(s, c)
}

function validateProfile(p: InstrumentProfile): void {
  for (const [k, v] of Object.entries(p)) {
    if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) fail('input', `instrument profile field ${k} must be a non-negative number`)
  }
}

const KINDS = new Set(['direction', 'angle', 'zenith', 'slope_distance', 'horizontal_distance', 'azimuth', 'height_difference'])

function validateObservation(o: ObservationRecord): void {
  const where = (col: string) => `line ${o.line}, column ${col}`
  if (!KINDS.has(o.kind)) fail('input', `${where('kind')}: unknown observation kind '${o.kind}'`)
  if (!o.at) fail('input', `${where('at')}: the station is missing`)
  if (!o.to) fail('input', `${where('to')}: the target is missing`)
  if (o.at === o.to) fail('input', `${where('to')}: target and station are both ${o.at}`)
  if (o.kind === 'angle') {
    if (!o.from) fail('input', `${where('from')}: an angle needs a backsight`)
    if (o.from === o.at || o.from === o.to) fail('input', `${where('from')}: backsight must differ from station and foresight`)
  }
  if (!Number.isFinite(o.value)) fail('input', `${where('value')}: not a finite number`)
  if ((o.kind === 'slope_distance' || o.kind === 'horizontal_distance') && !(o.value > 0)) {
    fail('input', `${where('value')}: a distance must be positive`)
  }
  if (o.kind === 'zenith' && !(o.value > 0 && o.value < Math.PI)) fail('input', `${where('value')}: a zenith angle must lie between 0 and 180°`)
  if (o.sigma !== null && !(Number.isFinite(o.sigma) && o.sigma > 0)) fail('input', `${where('sigma')}: must be a positive number`)
  for (const k of ['hi', 'ht'] as const) {
    const v = o[k]
    if (v !== null && !Number.isFinite(v)) fail('input', `${where(k)}: not a finite number`)
  }
  if (o.lengthKm !== null && !(Number.isFinite(o.lengthKm) && o.lengthKm > 0)) fail('input', `${where('length')}: must be a positive number of km`)
}

/** Structural datum check of the plane network held as given. */
function planeDatumCheck(names: string[], control: (ControlRecord | null)[], defs: PlaneDef[]): void {
  const held = control.filter((c) => c).length
  const hasAzimuth = defs.some((d) => d.type === 'azimuth')
  const hasDistance = defs.some((d) => d.type === 'distance')
  if (held === 0) fail('singular', 'no control: hold at least one point fixed or weighted, or choose a free network')
  if (held === 1 && !hasAzimuth) {
    fail('singular', `no fixed orientation: hold an azimuth or a second point (only ${names[control.findIndex((c) => c)]} is control)`)
  }
  if (held === 1 && !hasDistance) fail('singular', 'no scale: measure a distance or hold a second point')
}

/** A new station needs at least two independent observation lines. */
function stationLegCheck(names: string[], control: (ControlRecord | null)[], defs: PlaneDef[], free: boolean): void {
  const legs: { kind: string; other: number }[][] = names.map(() => [])
  for (const d of defs) {
    switch (d.type) {
      case 'direction':
      case 'azimuth':
        legs[d.at].push({ kind: d.type, other: d.to })
        legs[d.to].push({ kind: d.type, other: d.at })
        break
      case 'distance':
        legs[d.at].push({ kind: 'distance', other: d.to })
        legs[d.to].push({ kind: 'distance', other: d.at })
        break
      case 'angle':
        legs[d.at].push({ kind: 'angle', other: d.to }, { kind: 'angle', other: d.from })
        legs[d.to].push({ kind: 'angle', other: d.at })
        legs[d.from].push({ kind: 'angle', other: d.at })
        break
    }
  }
  for (let k = 0; k < names.length; k++) {
    if (control[k] && !free) continue
    const kinds = new Set(legs[k].map((l) => l.kind))
    const others = new Set(legs[k].map((l) => l.other))
    if (kinds.size === 1 && others.size === 1) {
      const kind = [...kinds][0].replace('_', ' ')
      const count = legs[k].length
      fail(
        'singular',
        `station ${names[k]} is connected by ${count === 1 ? `one ${kind} only` : `${kind}s to ${names[[...others][0]]} only`}`,
        [names[k]],
      )
    }
  }
}

// ---- problem builders ------------------------------------------------------------

function buildPlaneProblem(
  names: string[],
  control: (ControlRecord | null)[],
  coords: XY[],
  orientation: Float64Array,
  rows: PlaneRowDef[],
  setStation: string[],
  setLabel: string[],
  free: boolean,
) {
  const nS = names.length
  const nSets = orientation.length
  // orientation unknowns first, then stations in Cuthill–McKee order: keeps fill low
  const order = cuthillMcKee(nS, rows.flatMap(({ def }) => (def.type === 'coord' ? [] : def.type === 'angle' ? [[def.at, def.to], [def.at, def.from]] : [[def.at, def.to]])))
  const stationCols = names.map(() => Int32Array.from([-1, -1]))
  const labels: string[] = []
  // each set's orientation sits just before its station's coordinates: keeps R banded
  const setCol = new Int32Array(nSets)
  const setsAt = names.map(() => [] as number[])
  const nameIdx = new Map(names.map((s, k) => [s, k]))
  for (let s = 0; s < nSets; s++) setsAt[nameIdx.get(setStation[s])!].push(s)
  let u = 0
  for (const k of order) {
    for (const s of setsAt[k]) {
      setCol[s] = u++
      labels.push(`orientation of direction set ${setLabel[s] ? `'${setLabel[s]}' ` : ''}at station ${setStation[s]}`)
    }
    const c = control[k]
    if (free || !c || c.sdEast !== null) {
      stationCols[k][0] = u++
      labels.push(`station ${names[k]} (east)`)
    }
    if (free || !c || c.sdNorth !== null) {
      stationCols[k][1] = u++
      labels.push(`station ${names[k]} (north)`)
    }
  }
  const x0 = new Float64Array(u)
  const tolerance = new Float64Array(u)
  for (let s = 0; s < nSets; s++) {
    x0[setCol[s]] = orientation[s]
    tolerance[setCol[s]] = TOL_ANGLE
  }
  for (let k = 0; k < nS; k++) {
    const [ce, cn] = stationCols[k]
    if (ce >= 0) {
      x0[ce] = coords[k].e
      tolerance[ce] = TOL_LENGTH
    }
    if (cn >= 0) {
      x0[cn] = coords[k].n
      tolerance[cn] = TOL_LENGTH
    }
  }
  const fixedE = coords.map((c) => c.e)
  const fixedN = coords.map((c) => c.n)
  const E = (x: Float64Array, k: number) => (stationCols[k][0] >= 0 ? x[stationCols[k][0]] : fixedE[k])
  const N = (x: Float64Array, k: number) => (stationCols[k][1] >= 0 ? x[stationCols[k][1]] : fixedN[k])

  const linearize = (x: Float64Array): LinearRow[] =>
    rows.map(({ def, sigma }) => {
      const cols: number[] = []
      const coef: number[] = []
      const add = (c: number, v: number) => {
        if (c >= 0) {
          cols.push(c)
          coef.push(v)
        }
      }
      const dirTerms = (i: number, j: number, sign: number) => {
        const de = E(x, j) - E(x, i)
        const dn = N(x, j) - N(x, i)
        const d2 = de * de + dn * dn
        add(stationCols[i][0], (sign * -dn) / d2)
        add(stationCols[i][1], (sign * de) / d2)
        add(stationCols[j][0], (sign * dn) / d2)
        add(stationCols[j][1], (sign * -de) / d2)
        return azimuth(E(x, i), N(x, i), E(x, j), N(x, j))
      }
      let computed: number
      let misclosure: number
      switch (def.type) {
        case 'direction': {
          const az = dirTerms(def.at, def.to, 1)
          add(setCol[def.set], -1)
          computed = az - x[setCol[def.set]]
          misclosure = wrapPi(def.value - computed)
          break
        }
        case 'azimuth': {
          computed = dirTerms(def.at, def.to, 1)
          misclosure = wrapPi(def.value - computed)
          break
        }
        case 'angle': {
          const af = dirTerms(def.at, def.to, 1)
          const ab = dirTerms(def.at, def.from, -1)
          computed = af - ab
          misclosure = wrapPi(def.value - computed)
          break
        }
        case 'distance': {
          const i = def.at
          const j = def.to
          const de = E(x, j) - E(x, i)
          const dn = N(x, j) - N(x, i)
          const d = Math.hypot(de, dn)
          add(stationCols[i][0], -de / d)
          add(stationCols[i][1], -dn / d)
          add(stationCols[j][0], de / d)
          add(stationCols[j][1], dn / d)
          computed = d
          misclosure = def.value - d
          break
        }
        case 'coord': {
          const c = stationCols[def.st][def.comp]
          add(c, 1)
          computed = def.comp === 0 ? E(x, def.st) : N(x, def.st)
          misclosure = def.value - computed
          break
        }
      }
      return { cols, coef, misclosure, sigma, computed }
    })

  const nullSpace = free
    ? (x: Float64Array) => {
        let ce = 0
        let cn = 0
        for (let k = 0; k < nS; k++) {
          ce += E(x, k) / nS
          cn += N(x, k) / nS
        }
        const g = [new Float64Array(u), new Float64Array(u), new Float64Array(u), new Float64Array(u)]
        const weights = new Float64Array(u)
        for (let k = 0; k < nS; k++) {
          const [ie, in_] = stationCols[k]
          const e = E(x, k) - ce
          const n = N(x, k) - cn
          g[0][ie] = 1
          g[1][in_] = 1
          // rotation by a small angle: azimuths and all orientations grow by it
          g[2][ie] = n
          g[2][in_] = -e
          g[3][ie] = e
          g[3][in_] = n
          weights[ie] = weights[in_] = 1
        }
        for (let s = 0; s < nSets; s++) g[2][setCol[s]] = 1
        return { g, weights }
      }
    : undefined

  // the statistics read each station's block and the blocks between connected stations
  const cofactorGroups = () => {
    const own = (k: number) => [...stationCols[k]].filter((c) => c >= 0)
    const groups = names.map((_, k) => own(k))
    for (const { def } of rows) {
      if (def.type === 'coord') continue
      groups.push([...own(def.at), ...own(def.to)])
      if (def.type === 'angle') groups.push([...own(def.at), ...own(def.from)])
    }
    return groups
  }

  // sparse engine: a station's coordinates and its sets' orientations form one block
  const blocks = new Int32Array(u)
  for (let s = 0; s < nSets; s++) blocks[setCol[s]] = nameIdx.get(setStation[s])!
  stationCols.forEach((sc, k) => sc.forEach((j) => j >= 0 && (blocks[j] = k)))

  return {
    problem: { u, labels, tolerance, x0, linearize, nullSpace, cofactorGroups, blocks } satisfies NonlinearProblem,
    rowOut: rows.map((r) => r.def.out),
    rowScale: rows.map((r) => r.outScale),
    stationCols,
  }
}

function buildHeightProblem(
  names: string[],
  control: (ControlRecord | null)[],
  heights: number[],
  rows: HeightRowDef[],
  free: boolean,
) {
  const nS = names.length
  const order = cuthillMcKee(nS, rows.filter((r) => !r.coord).map((r) => [r.at, r.to]))
  const stationCols = names.map(() => Int32Array.from([-1]))
  const labels: string[] = []
  let u = 0
  for (const k of order) {
    const c = control[k]
    if (free || !c || c.sdHeight !== null) {
      stationCols[k][0] = u++
      labels.push(`station ${names[k]} (height)`)
    }
  }
  const x0 = new Float64Array(u)
  const tolerance = new Float64Array(u).fill(TOL_LENGTH)
  for (let k = 0; k < nS; k++) if (stationCols[k][0] >= 0) x0[stationCols[k][0]] = heights[k]
  const H = (x: Float64Array, k: number) => (stationCols[k][0] >= 0 ? x[stationCols[k][0]] : heights[k])
  const linearize = (x: Float64Array): LinearRow[] =>
    rows.map((r) => {
      const cols: number[] = []
      const coef: number[] = []
      const add = (c: number, v: number) => {
        if (c >= 0) {
          cols.push(c)
          coef.push(v)
        }
      }
      let computed: number
      if (r.coord) {
        add(stationCols[r.at][0], 1)
        computed = H(x, r.at)
      } else {
        add(stationCols[r.at][0], -1)
        add(stationCols[r.to][0], 1)
        computed = H(x, r.to) - H(x, r.at)
      }
      return { cols, coef, misclosure: r.value - computed, sigma: r.sigma, computed }
    })
  const nullSpace = free
    ? () => {
        const g = new Float64Array(u).fill(1)
        return { g: [g], weights: new Float64Array(u).fill(1) }
      }
    : undefined
  return {
    problem: { u, labels, tolerance, x0, linearize, nullSpace } satisfies NonlinearProblem,
    rowOut: rows.map((r) => r.out),
    rowScale: rows.map((r) => r.outScale),
    stationCols,
  }
}

/** Cuthill–McKee ordering of the station graph (bandwidth reduction, less fill in QR). */
function cuthillMcKee(n: number, edges: number[][]): number[] {
  const adj: Set<number>[] = Array.from({ length: n }, () => new Set())
  for (const [a, b] of edges) {
    if (a === b) continue
    adj[a].add(b)
    adj[b].add(a)
  }
  const seen = new Uint8Array(n)
  const order: number[] = []
  const byDegree = Array.from({ length: n }, (_, i) => i).sort((a, b) => adj[a].size - adj[b].size || a - b)
  for (const start of byDegree) {
    if (seen[start]) continue
    seen[start] = 1
    const queue = [start]
    for (let h = 0; h < queue.length; h++) {
      const v = queue[h]
      order.push(v)
      const next = [...adj[v]].filter((w) => !seen[w]).sort((a, b) => adj[a].size - adj[b].size || a - b)
      for (const w of next) {
        seen[w] = 1
        queue.push(w)
      }
    }
  }
  return order
}

/** Station names numbered in order of first use: the unknowns' station index of one network. */
function stationIndex() {
  const names: string[] = []
  const index = new Map<string, number>()
  const add = (name: string) => {
    let k = index.get(name)
    if (k === undefined) {
      k = names.length
      index.set(name, k)
      names.push(name)
    }
    return k
  }
  return { names, index, add }
}

/** The statistics of an observation before (or without) an adjustment: none yet. */
function notYetTested(): Pick<ObservationResult, 'residual' | 'redundancy' | 'w' | 'flagged' | 'tau' | 'tauFlagged' | 'mdb' | 'mdbEffect' | 'weak'> {
  return { residual: null, redundancy: null, w: null, flagged: false, tau: null, tauFlagged: false, mdb: null, mdbEffect: null, weak: false }
}
