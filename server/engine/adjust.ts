// adjustNetwork: checks the input (./input), reduces every measured row to the
// plane or the height network on the project's surface (./reduce, ./geodesy),
// computes approximate values (./approx), solves the height network and then
// the plane network (./height, ./plane) by Gauss–Newton with pivoted Householder
// QR (./lsq, ./qr), and derives the statistics: σ̂0² = vᵀPv / r, the two-sided
// χ² global test (not applicable when r = 0), reliability (./reliability) and
// precision (./precision). Heights come first because the plane reductions need
// the marks' heights (elevation, target height); a projected network whose
// adjusted positions moved far from the approximations is reduced and solved
// again from there.
//
// Sources: Baarda, W. (1968) A testing procedure for use in geodetic networks,
// Netherlands Geodetic Commission 2(5); Teunissen, P.J.G. (2000) Adjustment
// Theory, Delft University Press (Gauss–Newton, global test — from memory). The
// models and their sources are in ./models and ./geodesy.

import { approximateHeights, approximatePlane, type XY } from './approx'
import { fail, Stop } from './failure'
import { LOCAL_RADIUS, LocalSurface, ProjectedSurface, type Surface } from './geodesy'
import { GridProjection } from './grid'
import { buildHeightProblem, type HeightRow } from './height'
import { adjust3d } from './network3d'
import { mergeControls, planeDatumCheck, stationLegCheck, stationShells, validateObservations, validateProfile, validateSettings, type PlaneKindTag } from './input'
import { aprioriSigma, isAngularKind } from './models/registry'
import type { SigmaContext } from './models/types'
import { solveNonlinear, type NonlinearProblem, type SolveOptions } from './lsq'
import { buildPlaneProblem, type PlaneDef, type PlaneRow } from './plane'
import { planeStationPrecision, relativePrecision } from './precision'
import { reducePlane, reduceZenith, type HeightItem, type Partner, type PlaneItem, type ReductionStats } from './reduce'
import { testObservations } from './reliability'
import { RAD_TO_DEG } from './geometry'
import { DEFAULT_PROFILE } from './sigma'
import { chiSquareBounds, delta0 as delta0Of, ellipseScale, tauCritical, wCritical } from './stats'
import type {
  AdjustInput,
  AdjustOutcome,
  AdjustSettings,
  AdjustmentResult,
  ControlRecord,
  GlobalTest,
  GridReductionSummary,
  NetworkSummary,
  ObservationRecord,
  ObservationResult,
  RelativeResult,
  StationResult,
} from './types'

export const DEFAULT_SETTINGS: AdjustSettings = {
  datum: 'as-stored',
  scaling: 'a-posteriori',
  confidence: 0.95,
  alpha: 0.05,
  alpha0: 0.001,
  beta0: 0.8,
  maxIterations: 20,
  weakRedundancy: 0.2,
}

/** Coefficient of refraction and its σ when the caller gives none (common practice). */
export const DEFAULT_REFRACTION = { k: 0.13, sigmaK: 0.05 }
/** a projected network is reduced again when its adjusted positions moved more than this from the approximations (m) */
const REREDUCE_SHIFT = 0.5

export interface PhaseTimings {
  approximationMs: number
  /** sparse path: ordering and symbolic analysis (once per network); part of factorizationMs */
  orderingMs: number
  factorizationMs: number
  statisticsMs: number
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

/** The χ² test of one network, or of all: not applicable (passed null) without redundancy. */
export function globalTestOf(vpv: number, r: number, alpha: number): GlobalTest {
  const bounds = chiSquareBounds(alpha, r)
  return { statistic: vpv, lower: bounds.lower, upper: bounds.upper, passed: r > 0 ? vpv >= bounds.lower && vpv <= bounds.upper : null }
}

function surfaceOf(input: AdjustInput): { surface: Surface; proj: GridProjection | null; geoid: number; method: 'simpson' | 'midpoint' | null } {
  const spec = input.projection
  const h0 = input.projectHeightM ?? null
  if (h0 !== null && !(Number.isFinite(h0) && Math.abs(h0) <= 9000)) fail('input', 'projectHeightM: must be a number of metres between −9000 and 9000')
  if (!spec) return { surface: new LocalSurface(LOCAL_RADIUS, h0), proj: null, geoid: 0, method: null }
  if (typeof spec.proj4 !== 'string' || !spec.proj4.trim()) fail('input', 'projection, field proj4: the CRS definition is empty')
  const method = spec.scaleFactorMethod ?? 'simpson'
  if (method !== 'simpson' && method !== 'midpoint') fail('input', `projection, field scaleFactorMethod: must be 'simpson' or 'midpoint'`)
  const geoid = spec.geoidSeparationM ?? 0
  if (!Number.isFinite(geoid) || Math.abs(geoid) > 200) fail('input', 'projection, field geoidSeparationM: must be a number of metres between −200 and 200')
  let proj: GridProjection
  try {
    proj = new GridProjection(spec.proj4)
  } catch (e) {
    return fail('input', `projection, field proj4: ${e instanceof Error ? e.message : String(e)}`)
  }
  return { surface: new ProjectedSurface(proj, method), proj, geoid, method }
}

function refractionOf(input: AdjustInput) {
  const r = { ...DEFAULT_REFRACTION, ...(input.refraction ?? {}) }
  if (!(Number.isFinite(r.k) && r.k >= -1 && r.k <= 1)) fail('input', 'refraction, field k: the coefficient of refraction must lie between −1 and 1')
  if (!(Number.isFinite(r.sigmaK) && r.sigmaK >= 0 && r.sigmaK <= 1)) fail('input', 'refraction, field sigmaK: must lie between 0 and 1')
  return r
}

function run(input: AdjustInput, settings: AdjustSettings, timings: PhaseTimings, solveOptions: SolveOptions = {}): AdjustmentResult {
  const profile = input.profile ?? DEFAULT_PROFILE
  validateProfile(profile)
  const free = settings.datum === 'free'
  const controlByName = mergeControls(input.controls)
  const obsList = input.observations
  validateObservations(obsList)
  const vector = obsList.find((o) => o.kind === 'gnss_baseline' && !o.excluded)
  if (vector && !input.projection) {
    fail('input', `line ${vector.line}, column kind: GNSS baselines need a georeferenced project — a projected CRS and a geoid separation N — to be combined with grid coordinates and heights; a local plane cannot take them`)
  }
  const refraction = refractionOf(input)
  const { surface, proj, geoid, method } = surfaceOf(input)
  // GNSS baselines: the whole run is adjusted in 3D (./network3d)
  if (vector && proj) return adjust3d({ input, settings, timings, solveOptions, controlByName, proj, geoid, refraction, profile })

  const outputs: ObservationResult[] = obsList.map((o) => {
    const angular = isAngularKind(o.kind)
    return {
      id: o.id ?? null,
      line: o.line,
      kind: o.kind,
      component: null,
      at: o.at,
      from: o.from,
      to: o.to,
      observed: angular ? o.value * RAD_TO_DEG : o.value,
      adjusted: null,
      valueUnit: angular ? 'deg' : 'm',
      sigma: null,
      residualUnit: angular ? 'arcsec' : 'm',
      ...notYetTested(),
      excluded: o.excluded === true,
      remark: o.excluded === true ? 'excluded by the user' : null,
    }
  })
  const used = obsList.map((o, i) => ({ o, i })).filter((x) => !x.o.excluded)

  // ---- partners: a slope distance and the zenith of the same line ---------------
  const pairKey = (o: ObservationRecord) => `${o.at}\u0000${o.to}\u0000${o.set ?? ''}`
  const zeniths = new Map<string, ObservationRecord[]>()
  const slopes = new Map<string, ObservationRecord[]>()
  for (const { o } of used) {
    if (o.kind === 'zenith') zeniths.set(pairKey(o), [...(zeniths.get(pairKey(o)) ?? []), o])
    if (o.kind === 'slope_distance') slopes.set(pairKey(o), [...(slopes.get(pairKey(o)) ?? []), o])
  }

  // ---- station indexing and raw rows ----------------------------------------------
  const plane = stationIndex()
  const height = stationIndex()
  const setKeys = new Map<string, number>()
  const setStationName: string[] = []
  const setLabel: string[] = []
  const planeRaw: { out: number; rec: ObservationRecord; def: Exclude<PlaneDef, { type: 'coord' }>; zeniths?: ObservationRecord[] }[] = []
  const heightRaw: { out: number; rec: ObservationRecord; at: number; to: number; slopes?: ObservationRecord[] }[] = []
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
        planeRaw.push({ out: i, rec: o, def: { type: 'direction', at: plane.add(o.at), to: plane.add(o.to), set } })
        break
      }
      case 'angle':
        planeRaw.push({ out: i, rec: o, def: { type: 'angle', at: plane.add(o.at), from: plane.add(o.from!), to: plane.add(o.to) } })
        break
      case 'horizontal_distance':
        planeRaw.push({ out: i, rec: o, def: { type: 'distance', at: plane.add(o.at), to: plane.add(o.to) } })
        break
      case 'azimuth':
        planeRaw.push({ out: i, rec: o, def: { type: 'azimuth', at: plane.add(o.at), to: plane.add(o.to) } })
        break
      case 'slope_distance': {
        const zs = zeniths.get(pairKey(o))
        const c1 = controlByName.get(o.at)
        const c2 = controlByName.get(o.to)
        const heightsKnown = (c1?.height ?? null) !== null && (c2?.height ?? null) !== null
        if (!zs && !heightsKnown) {
          outputs[i].remark = 'not used: no zenith angle of the same line and no known heights of both ends to reduce it'
          break
        }
        planeRaw.push({ out: i, rec: o, def: { type: 'distance', at: plane.add(o.at), to: plane.add(o.to) }, ...(zs ? { zeniths: zs } : {}) })
        break
      }
      case 'zenith': {
        const ss = slopes.get(pairKey(o))
        if (!ss) {
          outputs[i].remark = 'not used: no slope distance of the same line'
          break
        }
        heightRaw.push({ out: i, rec: o, at: height.add(o.at), to: height.add(o.to), slopes: ss })
        break
      }
      case 'height_difference':
        heightRaw.push({ out: i, rec: o, at: height.add(o.at), to: height.add(o.to) })
        break
    }
  }
  const planeNames = plane.names
  const heightNames = height.names

  const ta = performance.now()
  // ---- approximate plane positions (from the rows as measured) ------------------
  const nP = planeNames.length
  const pControl = planeNames.map((s) => {
    const c = controlByName.get(s)
    return c && c.east !== null && c.north !== null ? c : null
  })
  const approxBy = new Map((input.approximate ?? []).map((a) => [a.station, a]))
  let planeCoords: XY[] = []
  let orientation: Float64Array = new Float64Array(0)
  if (nP > 0) {
    const kinds = new Set<PlaneKindTag>(planeRaw.map((p) => p.def.type))
    if (!free) planeDatumCheck(planeNames, pControl, kinds)
    stationLegCheck(planeNames, pControl, planeRaw.map((p) => ({ kind: p.def.type, at: p.def.at, to: p.def.to, ...(p.def.type === 'angle' ? { from: p.def.from } : {}) })), free)
    const known = new Map<string, XY>()
    planeNames.forEach((s, k) => {
      const c = pControl[k]
      if (c) known.set(s, { e: c.east!, n: c.north! })
      else {
        const a = approxBy.get(s)
        if (a && a.east !== undefined && a.north !== undefined) known.set(s, { e: a.east, n: a.north })
      }
    })
    let roughConvergence = 0
    if (proj && known.size) {
      try {
        roughConvergence = (surface as ProjectedSurface).convergence(...anyPlaced(known))
      } catch {
        roughConvergence = 0
      }
    }
    const roughHorizontal = (p: (typeof planeRaw)[number]) => (p.zeniths ? p.rec.value * Math.sin(circularMean(p.zeniths.map((z) => z.value))) : p.rec.value)
    const name = (k: number) => planeNames[k]
    const ap = approximatePlane({
      stations: planeNames,
      known,
      setCount: setKeys.size,
      directions: planeRaw.flatMap((p) => (p.def.type === 'direction' ? [{ at: name(p.def.at), to: name(p.def.to), set: p.def.set, value: p.rec.value }] : [])),
      angles: planeRaw.flatMap((p) => (p.def.type === 'angle' ? [{ at: name(p.def.at), from: name(p.def.from), to: name(p.def.to), value: p.rec.value }] : [])),
      distances: planeRaw.flatMap((p) => (p.def.type === 'distance' ? [{ at: name(p.def.at), to: name(p.def.to), value: roughHorizontal(p) }] : [])),
      // approximations only: an observed (ellipsoidal) azimuth turned by the convergence at a placed station
      azimuths: planeRaw.flatMap((p) => (p.def.type === 'azimuth' ? [{ at: name(p.def.at), to: name(p.def.to), value: p.rec.value + roughConvergence }] : [])),
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
  const planePos = (s: string): XY | null => {
    const k = plane.index.get(s)
    return k === undefined ? null : planeCoords[k]
  }
  const sigmaCtx: SigmaContext = {
    profile,
    length(a, b) {
      const p = planePos(a)
      const q = planePos(b)
      return p && q ? Math.hypot(q.e - p.e, q.n - p.n) : null
    },
  }
  const meanOf = (list: ObservationRecord[]): Partner => {
    const sig = list.map((r) => rowSigma(r, sigmaCtx))
    const value = list[0].kind === 'zenith' ? circularMean(list.map((r) => r.value)) : list.reduce((a, r) => a + r.value, 0) / list.length
    return { value, sigma: Math.sqrt(sig.reduce((a, s) => a + s * s, 0)) / list.length }
  }

  // ---- approximate heights ------------------------------------------------------
  const nH = heightNames.length
  const hControl = heightNames.map((s) => {
    const c = controlByName.get(s)
    return c && c.height !== null ? c : null
  })
  let heights: number[] = []
  const heightItems: HeightItem[] = heightRaw.map((h) => ({
    out: h.out,
    rec: h.rec,
    at: h.at,
    to: h.to,
    sigma: 0,
    ...(h.slopes ? { slope: meanOf(h.slopes) } : {}),
  }))
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
    const rough = (h: HeightItem) => {
      if (!h.slope) return h.rec.value
      const S = h.slope.value
      return S * Math.cos(h.rec.value) + (h.rec.hi ?? 0) - (h.rec.ht ?? 0) + ((1 - refraction.k) * (S * Math.sin(h.rec.value)) ** 2) / (2 * LOCAL_RADIUS)
    }
    const ah = approximateHeights(heightNames, known, heightItems.map((d) => ({ at: heightNames[d.at], to: heightNames[d.to], dh: rough(d) })), free)
    if (ah.unplaced.length) {
      fail('singular', `${ah.unplaced.join(', ')} ${ah.unplaced.length > 1 ? 'are' : 'is'} not connected by height differences to a benchmark`, ah.unplaced)
    }
    heights = heightNames.map((s) => ah.heights.get(s)!)
  }
  timings.approximationMs = performance.now() - ta

  // ---- result shells ----------------------------------------------------------------
  const { stationOut, allNames } = stationShells(input.controls, obsList, controlByName, free)
  const addCoordOut = (c: ControlRecord, comp: 'east' | 'north' | 'height', value: number, sd: number) => {
    outputs.push({
      id: null, line: c.line, kind: 'control', component: comp, at: c.station, from: null, to: c.station,
      observed: value, adjusted: null, valueUnit: 'm', sigma: sd, residualUnit: 'm', ...notYetTested(), excluded: false, remark: null,
    })
    return outputs.length - 1
  }

  const d0 = delta0Of(settings.alpha0, settings.beta0)
  const wCrit = wCritical(settings.alpha0)
  const totals = { vpv: 0, r: 0, n: 0, u: 0, iterations: 0 }
  let health = { conditionEstimate: 0, dominant: null as string | null }

  const solve = (kind: 'plane' | 'height', problem: NonlinearProblem) => {
    const outcome = solveNonlinear(problem, settings.maxIterations, solveOptions)
    if (!outcome.ok) {
      if (outcome.code === 'not_converged') {
        return fail('not_converged', `the ${kind} adjustment did not converge in ${outcome.iterations} iterations (last step ${outcome.maxStep.toExponential(2)} × tolerance): check for gross errors and approximate coordinates`)
      }
      const dep = outcome.dependent.map((j) => problem.labels[j])
      const st = [...new Set(outcome.dependent.map((j) => stationOfLabel(problem.labels[j])).filter((x): x is string => x !== null))]
      return fail('singular', `the ${kind} network is singular: ${dep.slice(0, 6).join(', ')}${dep.length > 6 ? ` and ${dep.length - 6} more` : ''} cannot be determined from the observations; check how ${st.length ? st.join(', ') : 'these'} ${st.length > 1 ? 'are' : 'is'} tied to the rest of the network`, st)
    }
    timings.factorizationMs += outcome.timings.factorizationMs
    timings.orderingMs += outcome.timings.orderingMs
    return outcome
  }

  const summarize = (
    kind: 'plane' | 'height',
    problem: NonlinearProblem,
    outcome: Extract<ReturnType<typeof solveNonlinear>, { ok: true }>,
    built: { rowOut: number[]; rowScale: number[]; stationCols: Int32Array[] },
    names: string[],
    planeRows: PlaneRow[] | null,
  ): { summary: NetworkSummary; relative: RelativeResult[] } => {
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
    const tCrit = tauCritical(settings.alpha0, r)
    const sigma0 = sigma0Sq === null ? null : Math.sqrt(sigma0Sq)
    testObservations(rows, outputs, built.rowOut, built.rowScale, qxx, built.stationCols, settings, { wCrit, tCrit, delta0: d0, sigma0 })
    const scale95 = ellipseScale(settings.confidence, estimated, r)
    names.forEach((name, k) => {
      const cols = built.stationCols[k]
      const st = stationOut.get(name)!
      if (kind === 'plane') {
        const [ce, cn] = cols
        st.east = ce >= 0 ? x[ce] : pControl[k]!.east
        st.north = cn >= 0 ? x[cn] : pControl[k]!.north
        planeStationPrecision(st, cols, qxx, varFactor, scale95)
        st.controlled.east = ce < 0 || isControlled(pControl[k], 'sdEast', free)
        st.controlled.north = cn < 0 || isControlled(pControl[k], 'sdNorth', free)
      } else {
        const [ch] = cols
        st.height = ch >= 0 ? x[ch] : hControl[k]!.height
        st.sdHeight = ch >= 0 ? Math.sqrt(Math.max(qxx.get(ch, ch) * varFactor, 0)) : st.sdHeight
        st.controlled.height = ch < 0 || isControlled(hControl[k], 'sdHeight', free)
      }
    })
    const relative = planeRows ? relativePrecision(planeRows, names, built.stationCols, stationOut, qxx, varFactor, scale95) : []
    const summary: NetworkSummary = {
      dof: r,
      sigma0,
      globalTest: globalTestOf(vpv, r, settings.alpha),
      counts: { n, u, r },
      iterations: outcome.iterations,
      tauCritical: tCrit,
      conditionEstimate: outcome.conditionEstimate,
      dominant: outcome.dominant === null ? null : problem.labels[outcome.dominant],
    }
    totals.vpv += vpv
    totals.r += r
    totals.n += n
    totals.u += u
    totals.iterations = Math.max(totals.iterations, outcome.iterations)
    if (summary.conditionEstimate > health.conditionEstimate) health = { conditionEstimate: summary.conditionEstimate, dominant: summary.dominant }
    timings.statisticsMs += performance.now() - t0 + outcome.timings.cofactorMs
    return { summary, relative }
  }

  // ---- height network ---------------------------------------------------------------
  let heightSummary: NetworkSummary | undefined
  const adjustedHeight = new Map<string, number>()
  const ellipsoidal = (H: number) => H + (proj ? geoid : 0)
  if (nH > 0) {
    const rows: HeightRow[] = []
    for (const h of heightItems) {
      const rec = h.rec
      if (h.slope) {
        const a = planePos(rec.at)
        const b = planePos(rec.to)
        const R = a && b ? surface.radiusAlong(a.e, a.n, b.e, b.n) : proj ? proj.gaussianRadius(0.7) : LOCAL_RADIUS
        const zSigma = rowSigma(rec, sigmaCtx)
        const red = reduceZenith(rec, zSigma, h.slope, ellipsoidal(heights[h.at]), R, refraction)
        rows.push({ out: h.out, at: h.at, to: h.to, value: red.value, coord: false, sigma: red.sigma, outScale: red.outScale })
      } else {
        const sigma = aprioriSigma(rec, sigmaCtx)
        if (sigma === null) fail('input', `line ${rec.line}, column length: a height difference without sigma needs the levelling length in km`)
        rows.push({ out: h.out, at: h.at, to: h.to, value: rec.value, coord: false, sigma: sigma!, outScale: 1 })
      }
    }
    if (!free) {
      heightNames.forEach((s, k) => {
        const c = hControl[k]
        if (c && c.sdHeight !== null) rows.push({ out: addCoordOut(c, 'height', c.height!, c.sdHeight), at: k, to: k, value: c.height!, coord: true, sigma: c.sdHeight, outScale: 1 })
      })
    }
    const built = buildHeightProblem(heightNames, hControl, heights, rows, free)
    const outcome = solve('height', built.problem)
    heightSummary = summarize('height', built.problem, outcome, built, heightNames, null).summary
    heightNames.forEach((s, k) => adjustedHeight.set(s, stationOut.get(s)!.height!))
  }

  // ---- plane network ----------------------------------------------------------------
  let planeSummary: NetworkSummary | undefined
  let relative: RelativeResult[] = []
  let reduction: ReductionStats | null = null
  const assumed = new Set<string>()
  if (nP > 0) {
    const knownH = planeNames.map((s) => {
      if (adjustedHeight.has(s)) return adjustedHeight.get(s)!
      const c = controlByName.get(s)
      if (c && c.height !== null) return c.height
      return approxBy.get(s)?.height ?? null
    })
    const given = knownH.filter((h): h is number => h !== null)
    const fallback = given.length ? given.reduce((a, b) => a + b, 0) / given.length : 0
    const heightAt = (k: number) => {
      if (knownH[k] !== null) return knownH[k]!
      assumed.add(planeNames[k])
      return fallback
    }
    const items: PlaneItem[] = planeRaw.map((p) => ({
      out: p.out,
      rec: p.rec,
      def: p.def,
      sigma: rowSigma(p.rec, sigmaCtx),
      ...(p.zeniths ? { zenith: meanOf(p.zeniths) } : {}),
    }))
    const planeRowsAt = (coords: XY[]) => {
      let red: ReturnType<typeof reducePlane>
      try {
        red = reducePlane(items, { surface, coords, height: heightAt, geoidSeparation: geoid, refraction }, outputs)
      } catch (e) {
        return fail('input', `projection: ${e instanceof Error ? e.message : String(e)}; check that the control coordinates are in this CRS`)
      }
      const rows = red.rows
      if (!free) {
        planeNames.forEach((s, k) => {
          const c = pControl[k]
          if (!c) return
          if (c.sdEast !== null) rows.push({ def: { type: 'coord', st: k, comp: 0 }, out: addCoordOut(c, 'east', c.east!, c.sdEast), value: c.east!, sigma: c.sdEast, outScale: 1 })
          if (c.sdNorth !== null) rows.push({ def: { type: 'coord', st: k, comp: 1 }, out: addCoordOut(c, 'north', c.north!, c.sdNorth), value: c.north!, sigma: c.sdNorth, outScale: 1 })
        })
      }
      return { rows, stats: red.stats }
    }
    const outputsBefore = outputs.length
    let pass = planeRowsAt(planeCoords)
    let built = buildPlaneProblem(planeNames, pControl, planeCoords, orientation, pass.rows, setStationName, setLabel, free)
    let outcome = solve('plane', built.problem)
    if (proj) {
      // the reductions depend (weakly) on where the lines are: redo them once from the adjusted positions when they moved far
      const moved = planeCoords.map((c, k) => {
        const [ce, cn] = built.stationCols[k]
        return { e: ce >= 0 ? outcome.x[ce] : c.e, n: cn >= 0 ? outcome.x[cn] : c.n }
      })
      const shift = Math.max(0, ...moved.map((m, k) => Math.hypot(m.e - planeCoords[k].e, m.n - planeCoords[k].n)))
      if (shift > REREDUCE_SHIFT) {
        outputs.length = outputsBefore
        const orient = Float64Array.from(orientation)
        // carry the adjusted orientations over as the new start
        const x0 = outcome.x
        pass = planeRowsAt(moved)
        built = buildPlaneProblem(planeNames, pControl, moved, orient, pass.rows, setStationName, setLabel, free)
        for (let j = 0; j < built.problem.u; j++) built.problem.x0[j] = x0[j]
        outcome = solve('plane', built.problem)
      }
    }
    reduction = pass.stats
    const s = summarize('plane', built.problem, outcome, built, planeNames, pass.rows)
    planeSummary = s.summary
    relative = s.relative
  }

  const gridReduction = summarizeReduction(reduction, proj, geoid, method, input.projectHeightM ?? null, [...assumed].sort())
  const sigma0 = totals.r > 0 ? Math.sqrt(totals.vpv / totals.r) : null
  const result: AdjustmentResult = {
    converged: true,
    iterations: totals.iterations,
    dof: totals.r,
    sigma0,
    globalTest: globalTestOf(totals.vpv, totals.r, settings.alpha),
    stations: allNames.map((s) => stationOut.get(s)!),
    observations: withVectorComponents(outputs, obsList),
    relative,
    health,
    counts: { n: totals.n, u: totals.u, r: totals.r },
    critical: { w: wCrit, tau: planeSummary?.tauCritical ?? heightSummary?.tauCritical ?? null, delta0: d0 },
    settings,
    gridReduction,
    refraction: { k: refraction.k, sigmaK: refraction.sigmaK, zeniths: heightItems.filter((h) => h.slope).length },
  }
  if (planeSummary) result.plane = planeSummary
  if (heightSummary) result.height = heightSummary
  return result
}

/**
 * Every vector reaching the plane and height adjustment is excluded (used ones
 * go to ./network3d); it is still reported as the 3D run reports vectors: three
 * rows, components dx, dy, dz, so a vector looks the same in every run.
 */
function withVectorComponents(outputs: ObservationResult[], obsList: ObservationRecord[]): ObservationResult[] {
  return outputs.flatMap((out, i) => {
    const rec = i < obsList.length ? obsList[i] : null
    if (!rec || rec.kind !== 'gnss_baseline' || !rec.vector) return [out]
    return (['dx', 'dy', 'dz'] as const).map((component, c) => ({ ...out, component, observed: rec.vector!.d[c], valueUnit: 'm' as const, residualUnit: 'm' as const }))
  })
}

/** A placed station's position for the rough convergence of approximate azimuths. */
function anyPlaced(known: Map<string, XY>): [number, number] {
  const first = known.values().next().value as XY | undefined
  return first ? [first.e, first.n] : [500000, 0]
}

function summarizeReduction(
  stats: ReductionStats | null,
  proj: GridProjection | null,
  geoid: number,
  method: 'simpson' | 'midpoint' | null,
  projectHeight: number | null,
  heightsAssumed: string[],
): GridReductionSummary {
  const f = stats?.factors ?? []
  const mean = (xs: number[]) => (xs.length ? xs.reduce((a, b) => a + b, 0) / xs.length : null)
  const applied = proj !== null || projectHeight !== null
  return {
    applied,
    method: proj ? method : null,
    radiusM: proj ? null : LOCAL_RADIUS,
    geoidSeparationM: proj ? geoid : null,
    projectHeightM: proj ? null : projectHeight,
    distances: applied ? f.length : 0,
    directions: stats?.directions ?? 0,
    maxArcToChordArcsec: proj && stats ? stats.maxArcToChord * ((180 * 3600) / Math.PI) : null,
    meanCombinedFactor: applied ? mean(f.map((x) => x.cf)) : null,
    minCombinedFactor: applied && f.length ? Math.min(...f.map((x) => x.cf)) : null,
    maxCombinedFactor: applied && f.length ? Math.max(...f.map((x) => x.cf)) : null,
    meanScaleFactor: applied ? mean(f.map((x) => x.k)) : null,
    meanElevationFactor: applied ? mean(f.map((x) => x.ef)) : null,
    heightsAssumed: applied ? heightsAssumed : [],
  }
}

/** The σ the adjustment uses for one row: its own, or the profile's (geometry from the approximations). */
function rowSigma(o: ObservationRecord, ctx: SigmaContext): number {
  const s = aprioriSigma(o, ctx)
  if (s === null) return fail('input', `line ${o.line}, column sigma: no σ given and the profile's σ needs a length that is not known`)
  if (!(Number.isFinite(s) && s > 0)) return fail('input', `line ${o.line}, column sigma: the σ from the instrument profile is ${s}; it must be finite and positive (check the profile)`)
  return s
}

function isControlled(c: ControlRecord | null, key: 'sdEast' | 'sdNorth' | 'sdHeight', free: boolean): boolean {
  return !!c && !free && c[key] !== null
}

function stationOfLabel(label: string): string | null {
  const m = /^station (.+) \((east|north|height)\)$/.exec(label) ?? /at station (.+)$/.exec(label)
  return m ? m[1] : null
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
