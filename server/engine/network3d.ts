// The combined 3D adjustment: GNSS baselines together with terrestrial
// observations, in one Gauss–Newton least-squares problem solved by the same
// pivoted Householder QR as the plane network (./lsq — dense or sparse).
//
// Unknowns: per station its geodetic latitude φ, longitude λ and ellipsoidal
// height h on the ellipsoid of the project's CRS, carried as metres —
//   x_e = (λ − λ₀)(ν₀ + h₀) cos φ₀,  x_n = (φ − φ₀)(ρ₀ + h₀),  x_u = h
// (λ₀, φ₀, h₀ the approximate position) — so that a held E, N fixes φ, λ and a
// held H fixes h exactly (H = h − N, one geoid separation N); one orientation
// unknown per direction set. Observation equations, at the instrument point
// P₁ = X(φ₁, λ₁, h₁ + hi) and the target point P₂ = X(φ₂, λ₂, h₂ + ht),
// d = P₂ − P₁ and (e, n, u) = d in the local frame of station 1's ellipsoid
// normal (./geodesy3d):
//   GNSS baseline      ΔX ΔY ΔZ = X_to − X_at (marks), 3 rows whitened by L⁻¹
//                      (C = L·Lᵀ its 3×3 covariance, ./models/gnss-baseline)
//   slope distance     S = |d| (the chord)
//   zenith angle       z = atan2(√(e² + n²), u) − k·S/(2R), R the normal-section
//                      radius in the line's azimuth; σ² = σ_z² + (S/(2R)·σ_k)²
//   direction          atan2(e, n) − ω_set
//   azimuth            atan2(e, n) (geodetic azimuth in the normal's horizon)
//   angle              atan2(e, n) to the target − the same to the backsight
//   horizontal distance √(e² + n²) (horizontal part of the chord in the
//                      instrument's horizon, no curvature or refraction)
//   height difference  H_to − H_at = h_to − h_at (levelling, one N for the network)
//   weighted control   E, N through the projection (proj4), H = h − N
// The deflection of the vertical is ignored: the ellipsoid normal stands for the
// plumb line (the result says so). Partial derivatives are analytic, including
// the turn of station 1's local frame with its latitude and longitude.
//
// Statistics: redundancy numbers r_i = (Q_vv·P)_ii, which sum to r; Baarda's
// w_i = (P·v)_i / √(P·Q_vv·P)_ii and MDB_i = δ0 / √(P·Q_vv·P)_ii, which reduce
// to v/(σ√r_i) and σδ0/√r_i for an uncorrelated row; the test of a whole vector
// T = v_bᵀ (Q_vv)_bb⁺ v_b (in whitened form ṽᵀ R̃⁺ ṽ, R̃ = I − Ã_b·Q_xx·Ã_bᵀ)
// against χ²(q) (σ0 = 1), or, when σ̂0 is used, F = (T/q) / ((vᵀPv − T)/(r − q))
// against F(q, r − q): the variance factor estimated without the tested vector
// (q = rank of R̃, 3 unless the vector is partly uncontrolled). Precision: each
// station's 3×3 cofactor block; E, N through the Jacobian of the projection
// (meridian convergence and scale included), σH = σ_h.
//
// Sources: Leick, A., Rapoport, L., Tatarnikov, D. (2015) GPS Satellite
// Surveying, 4th ed., Wiley, ch. 2 (adjustment of baseline networks, combining
// terrestrial observations in the local geodetic horizon); Ghilani, C.D. (2017)
// Adjustment Computations, 6th ed., Wiley, ch. on three-dimensional geodetic
// network adjustment (observation equations of slope distance, azimuth and
// zenith in the local frame); Torge, W. & Müller, J. (2012) Geodesy, 4th ed.,
// de Gruyter (refraction, deflection of the vertical); Teunissen, P.J.G. (2000)
// Testing Theory, Delft University Press (the w-test of correlated observations
// and the test of a q-dimensional alternative) — all from memory.

import { approximateHeights, approximatePlane, type XY } from './approx'
import { globalTestOf, type PhaseTimings } from './adjust'
import type { CofactorMatrix } from './cofactor'
import { fail } from './failure'
import { stationShells } from './input'
import { dot, fromEcef, geodeticPoint, normalSectionRadius, sub, toEnu, type Ellipsoid, type GeodeticPoint, type Vec3 } from './geodesy3d'
import { ellipseFromCovariance, RAD_TO_DEG, RHO_ARCSEC, wrapPi } from './geometry'
import type { GridProjection } from './grid'
import { solveNonlinear, type LinearRow, type NonlinearProblem, type SolveOptions } from './lsq'
import { baselineCovarianceCholesky } from './models/gnss-baseline'
import { aprioriSigma, isAngularKind } from './models/registry'
import type { SigmaContext } from './models/types'
import { cuthillMcKee } from './plane'
import { roundEllipse } from './precision'
import { testObservations, UNCONTROLLED } from './reliability'
import { chiSquareQuantile, delta0 as delta0Of, ellipseScale, fQuantile, tauCritical, wCritical } from './stats'
import type {
  AdjustInput,
  AdjustmentResult,
  AdjustSettings,
  ControlRecord,
  InstrumentProfile,
  Network3dSummary,
  ObservationRecord,
  ObservationResult,
  RelativeResult,
  StationResult,
  VectorTest,
} from './types'

const TOL_LENGTH = 1e-5
const TOL_ANGLE = 1e-8
/** step of the central differences of the projection (rad, ≈ 0.6 m) */
const GRID_STEP = 1e-7

export interface Network3dContext {
  input: AdjustInput
  settings: AdjustSettings
  timings: PhaseTimings
  solveOptions: SolveOptions
  controlByName: Map<string, ControlRecord>
  proj: GridProjection
  geoid: number
  refraction: { k: number; sigmaK: number }
  profile: InstrumentProfile
}

type Row3 =
  | { type: 'vector'; outs: [number, number, number]; at: number; to: number; d: Vec3; l: Float64Array; li: Float64Array }
  | { type: 'slope' | 'hd' | 'zenith' | 'azimuth'; out: number; at: number; to: number; hi: number; ht: number; value: number; sigma: number }
  | { type: 'direction'; out: number; at: number; to: number; hi: number; ht: number; value: number; sigma: number; set: number }
  | { type: 'angle'; out: number; at: number; from: number; to: number; hi: number; ht: number; value: number; sigma: number }
  | { type: 'dh'; out: number; at: number; to: number; value: number; sigma: number }
  | { type: 'coord'; out: number; st: number; comp: 0 | 1 | 2; value: number; sigma: number }

/** Columns and coefficients of one linear row, duplicates merged. */
class Acc {
  cols: number[] = []
  coef: number[] = []
  add(col: number, v: number): void {
    if (col < 0) return
    const i = this.cols.indexOf(col)
    if (i >= 0) this.coef[i] += v
    else {
      this.cols.push(col)
      this.coef.push(v)
    }
  }
}

export function adjust3d(ctx: Network3dContext): AdjustmentResult {
  const { input, settings, timings, proj, geoid, refraction, controlByName } = ctx
  const free = settings.datum === 'free'
  if (free) {
    // a translation leaves vectors and chords unchanged, but turns the ellipsoid
    // normal that every other kind is measured against: only these two have the
    // three translations as an exact datum defect
    const other = input.observations.find((o) => !o.excluded && o.kind !== 'gnss_baseline' && o.kind !== 'slope_distance')
    if (other) {
      fail('input', `line ${other.line}, column kind: a free 3D network takes GNSS baselines and slope distances only — a ${other.kind.replace('_', ' ')} is measured against the ellipsoid normal, which a free translation turns; hold one station in E, N and H instead (datum 'as-stored')`)
    }
  }
  const ell: Ellipsoid = { a: proj.a, es: proj.es }
  const obsList = input.observations
  const ta = performance.now()

  // ---- result rows: one per record, three per GNSS baseline ------------------------
  const outputs: ObservationResult[] = []
  const outOf: number[] = []
  for (const o of obsList) {
    outOf.push(outputs.length)
    const excluded = o.excluded === true
    const base = {
      id: o.id ?? null, line: o.line, kind: o.kind, at: o.at, from: o.from, to: o.to, adjusted: null, sigma: null,
      ...untested(), excluded, remark: excluded ? 'excluded by the user' : null,
    }
    if (o.kind === 'gnss_baseline') {
      const comps = ['dx', 'dy', 'dz'] as const
      comps.forEach((component, c) => outputs.push({ ...base, component, observed: o.vector!.d[c], valueUnit: 'm', residualUnit: 'm' }))
    } else {
      const angular = isAngularKind(o.kind)
      outputs.push({ ...base, component: null, observed: angular ? o.value * RAD_TO_DEG : o.value, valueUnit: angular ? 'deg' : 'm', residualUnit: angular ? 'arcsec' : 'm' })
    }
  }
  const used = obsList.map((o, i) => ({ o, out: outOf[i] })).filter((x) => !x.o.excluded)

  // ---- stations of the 3D network ---------------------------------------------------
  const names: string[] = []
  const index = new Map<string, number>()
  const add = (s: string) => {
    let k = index.get(s)
    if (k === undefined) {
      k = names.length
      index.set(s, k)
      names.push(s)
    }
    return k
  }
  for (const { o } of used) {
    add(o.at)
    if (o.from) add(o.from)
    add(o.to)
  }
  const nS = names.length
  const control = names.map((s) => controlByName.get(s) ?? null)
  control.forEach((c) => {
    if (c && c.east !== null && (c.sdEast === null) !== (c.sdNorth === null)) {
      fail('input', `line ${c.line}, column sigma: in the combined 3D adjustment east and north of control point ${c.station} are held or weighted together (give σ for both or for neither)`)
    }
  })
  // free network: control values only seed the approximations (as in the plane network)
  const heldHz = control.map((c) => !free && !!c && c.east !== null && c.sdEast === null)
  const heldUp = control.map((c) => !free && !!c && c.height !== null && c.sdHeight === null)
  if (!free && !control.some((c) => c && c.east !== null)) {
    fail('singular', 'no position datum: the combined 3D adjustment needs at least one station held (or weighted) in east and north — GNSS vectors carry orientation and scale, not position')
  }
  if (!free && !control.some((c) => c && c.height !== null)) {
    fail('singular', 'no height datum: hold (or weight) the height H of at least one station — GNSS vectors give height differences only')
  }

  // ---- approximate positions ------------------------------------------------------------
  const lat = new Float64Array(nS).fill(NaN)
  const lon = new Float64Array(nS).fill(NaN)
  const hEll = new Float64Array(nS).fill(NaN)
  const approxBy = new Map((input.approximate ?? []).map((a) => [a.station, a]))
  const geographic = (e: number, n: number, where: string) => {
    try {
      return proj.toGeographic(e, n)
    } catch (err) {
      return fail('input', `${where}: ${err instanceof Error ? err.message : String(err)}; check that the coordinates are in the project's CRS`)
    }
  }
  names.forEach((s, k) => {
    const c = control[k]
    const a = approxBy.get(s)
    if (c && c.east !== null) {
      const g = geographic(c.east, c.north!, `line ${c.line}, control point ${s}`)
      lat[k] = g.lat
      lon[k] = g.lon
    } else if (a && a.east !== undefined && a.north !== undefined) {
      const g = geographic(a.east, a.north, `approximate coordinates of ${s}`)
      lat[k] = g.lat
      lon[k] = g.lon
    }
    if (c && c.height !== null) hEll[k] = c.height + geoid
    else if (a && a.height !== undefined) hEll[k] = a.height + geoid
  })
  const placed = (k: number) => !Number.isNaN(lat[k])
  const vectors = used.filter((x) => x.o.kind === 'gnss_baseline').map((x) => ({ at: index.get(x.o.at)!, to: index.get(x.o.to)!, d: x.o.vector!.d }))
  const spreadVectors = () => {
    // a placed station without a height yet carries the vector with a stand-in
    // height (the mean known one): its position then moves by about
    // Δh·(length/R), metres at most, which the iteration removes
    const known = Array.from(hEll).filter((h) => !Number.isNaN(h))
    const standIn = known.length ? known.reduce((a, b) => a + b, 0) / known.length : geoid
    let any = false
    let progress = true
    while (progress) {
      progress = false
      for (const v of vectors) {
        for (const [from, to, sign] of [[v.at, v.to, 1], [v.to, v.at, -1]] as const) {
          if (!placed(from)) continue
          const hKnown = !Number.isNaN(hEll[from])
          const needPosition = !placed(to)
          const needHeight = hKnown && Number.isNaN(hEll[to])
          if (!needPosition && !needHeight) continue
          const x = geodeticPoint(ell, lat[from], lon[from], hKnown ? hEll[from] : standIn).x
          const g = fromEcef(ell, [x[0] + sign * v.d[0], x[1] + sign * v.d[1], x[2] + sign * v.d[2]])
          if (needPosition) {
            lat[to] = g.lat
            lon[to] = g.lon
          }
          if (needHeight) hEll[to] = g.h
          progress = any = true
        }
      }
    }
    return any
  }
  const terrestrial = used.filter((x) => x.o.kind !== 'gnss_baseline').map((x) => x.o)
  const zenithOf = new Map<string, number>()
  for (const o of terrestrial) if (o.kind === 'zenith') zenithOf.set(`${o.at}\u0000${o.to}`, o.value)
  const setKeys = new Map<string, number>()
  const setStation: number[] = []
  const setLabel: string[] = []
  for (const o of terrestrial) {
    if (o.kind !== 'direction') continue
    const key = `${o.at}\u0000${o.set ?? ''}`
    if (!setKeys.has(key)) {
      setKeys.set(key, setKeys.size)
      setStation.push(index.get(o.at)!)
      setLabel.push(o.set ?? '')
    }
  }
  const setOf = (o: ObservationRecord) => setKeys.get(`${o.at}\u0000${o.set ?? ''}`)!
  const gridOf = (k: number): XY => {
    const g = proj.toGrid(lon[k], lat[k])
    return { e: g.e, n: g.n }
  }
  const spreadPlane = () => {
    if (names.every((_, k) => placed(k))) return false
    const known = new Map<string, XY>()
    names.forEach((s, k) => placed(k) && known.set(s, gridOf(k)))
    // grid azimuth of the geodetic north at a placed station: turns observed azimuths to the grid roughly
    const first = names.findIndex((_, k) => placed(k))
    if (first < 0) return false
    const p = proj.toGrid(lon[first], lat[first])
    const q = proj.toGrid(lon[first], lat[first] + 1e-6)
    const gridNorth = Math.atan2(q.e - p.e, q.n - p.n)
    const horizontal = (o: ObservationRecord) => {
      const z = zenithOf.get(`${o.at}\u0000${o.to}`)
      return o.kind === 'slope_distance' && z !== undefined ? o.value * Math.sin(z) : o.value
    }
    const ap = approximatePlane({
      stations: names,
      known,
      setCount: setKeys.size,
      directions: terrestrial.flatMap((o) => (o.kind === 'direction' ? [{ at: o.at, to: o.to, set: setOf(o), value: o.value }] : [])),
      angles: terrestrial.flatMap((o) => (o.kind === 'angle' ? [{ at: o.at, from: o.from!, to: o.to, value: o.value }] : [])),
      distances: terrestrial.flatMap((o) => (o.kind === 'horizontal_distance' || o.kind === 'slope_distance' ? [{ at: o.at, to: o.to, value: horizontal(o) }] : [])),
      azimuths: terrestrial.flatMap((o) => (o.kind === 'azimuth' ? [{ at: o.at, to: o.to, value: o.value + gridNorth }] : [])),
      seedIfEmpty: false,
    })
    let any = false
    names.forEach((s, k) => {
      const c = ap.coords.get(s)
      if (placed(k) || !c) return
      const g = geographic(c.e, c.n, `approximate position of ${s}`)
      lat[k] = g.lat
      lon[k] = g.lon
      any = true
    })
    return any
  }
  const spreadHeights = () => {
    const known = new Map<string, number>()
    names.forEach((s, k) => !Number.isNaN(hEll[k]) && known.set(s, hEll[k]))
    const lines = terrestrial.flatMap((o) => {
      if (o.kind === 'height_difference') return [{ at: o.at, to: o.to, dh: o.value }]
      if (o.kind === 'zenith') {
        const s = terrestrial.find((x) => x.kind === 'slope_distance' && x.at === o.at && x.to === o.to)
        if (s) return [{ at: o.at, to: o.to, dh: s.value * Math.cos(o.value) + (o.hi ?? 0) - (o.ht ?? 0) }]
      }
      return []
    })
    const ah = approximateHeights(names, known, lines, false)
    let any = false
    names.forEach((s, k) => {
      if (Number.isNaN(hEll[k]) && ah.heights.has(s)) {
        hEll[k] = ah.heights.get(s)!
        any = true
      }
    })
    return any
  }
  for (let pass = 0; pass < 6; pass++) {
    const a = spreadVectors()
    const b = spreadPlane()
    const c = spreadHeights()
    if (!a && !b && !c) break
  }
  const unplaced = names.filter((_, k) => !placed(k))
  if (unplaced.length) {
    fail(
      'unplaceable',
      `approximate coordinates could not be computed for ${unplaced.join(', ')}: give approximate coordinates or add observations that tie ${unplaced.length > 1 ? 'them' : 'it'} to placed stations`,
      unplaced,
    )
  }
  const assumed: string[] = []
  {
    const given = Array.from(hEll).filter((h) => !Number.isNaN(h))
    const mean = given.length ? given.reduce((s, h) => s + h, 0) / given.length : geoid
    names.forEach((s, k) => {
      if (Number.isNaN(hEll[k])) {
        hEll[k] = mean
        assumed.push(s)
      }
    })
  }

  // ---- unknowns ------------------------------------------------------------------------
  const edges: number[][] = []
  for (const { o } of used) {
    const a = index.get(o.at)!
    edges.push([a, index.get(o.to)!])
    if (o.from) edges.push([a, index.get(o.from)!])
  }
  const order = cuthillMcKee(nS, edges)
  const setsAt = names.map(() => [] as number[])
  setStation.forEach((k, s) => setsAt[k].push(s))
  const stationCols = names.map(() => Int32Array.from([-1, -1, -1]))
  const setCol = new Int32Array(setStation.length)
  const labels: string[] = []
  let u = 0
  for (const k of order) {
    for (const s of setsAt[k]) {
      setCol[s] = u++
      labels.push(`orientation of direction set ${setLabel[s] ? `'${setLabel[s]}' ` : ''}at station ${names[k]}`)
    }
    if (!heldHz[k]) {
      stationCols[k][0] = u++
      labels.push(`station ${names[k]} (east)`)
      stationCols[k][1] = u++
      labels.push(`station ${names[k]} (north)`)
    }
    if (!heldUp[k]) {
      stationCols[k][2] = u++
      labels.push(`station ${names[k]} (height)`)
    }
  }
  const lat0 = Float64Array.from(lat)
  const lon0 = Float64Array.from(lon)
  const scaleE = new Float64Array(nS)
  const scaleN = new Float64Array(nS)
  for (let k = 0; k < nS; k++) {
    const p = geodeticPoint(ell, lat0[k], lon0[k], hEll[k])
    scaleE[k] = (p.nu + hEll[k]) * p.cosLat
    scaleN[k] = p.rho + hEll[k]
  }
  const x0 = new Float64Array(u)
  const tolerance = new Float64Array(u).fill(TOL_LENGTH)
  for (let k = 0; k < nS; k++) if (stationCols[k][2] >= 0) x0[stationCols[k][2]] = hEll[k]
  const stationAt = (x: Float64Array, k: number, above = 0): GeodeticPoint => {
    const [ce, cn, cu] = stationCols[k]
    return geodeticPoint(
      ell,
      lat0[k] + (cn >= 0 ? x[cn] / scaleN[k] : 0),
      lon0[k] + (ce >= 0 ? x[ce] / scaleE[k] : 0),
      (cu >= 0 ? x[cu] : hEll[k]) + above,
    )
  }
  // orientation of each set from the approximations: mean of (geodetic azimuth − direction)
  {
    const start = stationsOf(x0)
    const sums = setStation.map(() => ({ s: 0, c: 0 }))
    for (const o of terrestrial) {
      if (o.kind !== 'direction') continue
      const a = index.get(o.at)!
      const t = index.get(o.to)!
      const enu = toEnu(start[a], sub(start[t].x, start[a].x))
      const w = Math.atan2(enu[0], enu[1]) - o.value
      const s = sums[setOf(o)]
      s.s += Math.sin(w)
      s.c += Math.cos(w)
    }
    sums.forEach((s, i) => {
      x0[setCol[i]] = Math.atan2(s.s, s.c)
      tolerance[setCol[i]] = TOL_ANGLE
    })
  }
  function stationsOf(x: Float64Array): GeodeticPoint[] {
    return names.map((_, k) => stationAt(x, k))
  }

  // ---- rows ------------------------------------------------------------------------------
  const approxPts = stationsOf(x0)
  const sigmaCtx: SigmaContext = {
    profile: ctx.profile,
    length(a, b) {
      const i = index.get(a)
      const j = index.get(b)
      return i === undefined || j === undefined ? null : Math.hypot(...sub(approxPts[j].x, approxPts[i].x))
    },
  }
  const sigmaOf = (o: ObservationRecord): number => {
    const s = aprioriSigma(o, sigmaCtx)
    if (s === null) return fail('input', `line ${o.line}, column ${o.kind === 'height_difference' ? 'length' : 'sigma'}: no σ given and the profile's σ needs a length that is not known`)
    if (!(Number.isFinite(s) && s > 0)) return fail('input', `line ${o.line}, column sigma: the σ from the instrument profile is ${s}; it must be finite and positive (check the profile)`)
    return s
  }
  const rows: Row3[] = []
  let zeniths = 0
  for (const { o, out } of used) {
    const at = index.get(o.at)!
    const to = index.get(o.to)!
    const hi = o.hi ?? 0
    const ht = o.ht ?? 0
    switch (o.kind) {
      case 'gnss_baseline': {
        const l = baselineCovarianceCholesky(o.vector!)
        if (!l) return fail('input', `line ${o.line}, column correlation: the covariance is not positive definite`)
        rows.push({ type: 'vector', outs: [out, out + 1, out + 2], at, to, d: o.vector!.d, l, li: lowerInverse(l) })
        break
      }
      case 'slope_distance':
        rows.push({ type: 'slope', out, at, to, hi, ht, value: o.value, sigma: sigmaOf(o) })
        break
      case 'horizontal_distance':
        rows.push({ type: 'hd', out, at, to, hi, ht, value: o.value, sigma: sigmaOf(o) })
        break
      case 'azimuth':
        rows.push({ type: 'azimuth', out, at, to, hi, ht, value: o.value, sigma: sigmaOf(o) })
        break
      case 'zenith': {
        // σ of the refraction angle k·S/(2R) joins the zenith's own σ
        const p = approxPts[at]
        const d = toEnu(p, sub(approxPts[to].x, p.x))
        const S = Math.hypot(...d)
        const R = normalSectionRadius(p, Math.atan2(d[0], d[1]))
        const sz = sigmaOf(o)
        rows.push({ type: 'zenith', out, at, to, hi, ht, value: o.value, sigma: Math.hypot(sz, (S / (2 * R)) * refraction.sigmaK) })
        zeniths++
        break
      }
      case 'direction':
        rows.push({ type: 'direction', out, at, to, hi, ht, value: o.value, sigma: sigmaOf(o), set: setOf(o) })
        break
      case 'angle':
        rows.push({ type: 'angle', out, at, from: index.get(o.from!)!, to, hi, ht, value: o.value, sigma: sigmaOf(o) })
        break
      case 'height_difference':
        rows.push({ type: 'dh', out, at, to, value: o.value, sigma: sigmaOf(o) })
        break
    }
  }
  const addCoordOut = (c: ControlRecord, comp: 'east' | 'north' | 'height', value: number, sd: number) => {
    outputs.push({
      id: null, line: c.line, kind: 'control', component: comp, at: c.station, from: null, to: c.station,
      observed: value, adjusted: null, valueUnit: 'm', sigma: sd, residualUnit: 'm', ...untested(), excluded: false, remark: null,
    })
    return outputs.length - 1
  }
  control.forEach((c, k) => {
    if (!c || free) return
    if (c.east !== null && c.sdEast !== null) {
      rows.push({ type: 'coord', out: addCoordOut(c, 'east', c.east, c.sdEast), st: k, comp: 0, value: c.east, sigma: c.sdEast })
      rows.push({ type: 'coord', out: addCoordOut(c, 'north', c.north!, c.sdNorth!), st: k, comp: 1, value: c.north!, sigma: c.sdNorth! })
    }
    if (c.height !== null && c.sdHeight !== null) rows.push({ type: 'coord', out: addCoordOut(c, 'height', c.height, c.sdHeight), st: k, comp: 2, value: c.height, sigma: c.sdHeight })
  })
  timings.approximationMs = performance.now() - ta

  // ---- linearization -------------------------------------------------------------------
  /** ∂X/∂(x_e, x_n, x_u) of station k at a point `p` of its normal (columns −1 = held). */
  const dXdx = (k: number, p: GeodeticPoint): Vec3[] => {
    const fe = ((p.nu + p.h) * p.cosLat) / scaleE[k]
    const fn = (p.rho + p.h) / scaleN[k]
    return [
      [p.east[0] * fe, p.east[1] * fe, p.east[2] * fe],
      [p.north[0] * fn, p.north[1] * fn, p.north[2] * fn],
      p.up,
    ]
  }
  /**
   * The local vector (e, n, u) from station a's instrument point to station b's
   * target point, and its Jacobian by unknown (3 rows per column).
   */
  const local = (x: Float64Array, a: number, hi: number, b: number, ht: number) => {
    const p1 = stationAt(x, a, hi)
    const p2 = stationAt(x, b, ht)
    const d = sub(p2.x, p1.x)
    const enu = toEnu(p1, d)
    const cols: number[] = []
    const jac: Vec3[] = []
    const [ce, cn, cu] = stationCols[a]
    const [de, dn, du] = enu
    if (ce >= 0) {
      // the instrument point moves east, and the frame turns with the longitude
      const fe = ((p1.nu + p1.h) * p1.cosLat) / scaleE[a]
      const s = 1 / scaleE[a]
      cols.push(ce)
      jac.push([-fe + (p1.sinLat * dn - p1.cosLat * du) * s, -p1.sinLat * de * s, p1.cosLat * de * s])
      const fn = (p1.rho + p1.h) / scaleN[a]
      const t = 1 / scaleN[a]
      cols.push(cn)
      jac.push([0, -fn - du * t, dn * t])
    }
    if (cu >= 0) {
      cols.push(cu)
      jac.push([0, 0, -1])
    }
    const B = dXdx(b, p2)
    stationCols[b].forEach((c, i) => {
      if (c < 0) return
      cols.push(c)
      jac.push(toEnu(p1, B[i]))
    })
    return { p1, enu, cols, jac }
  }
  const terms = (acc: Acc, l: { cols: number[]; jac: Vec3[] }, g: Vec3, sign = 1) => {
    for (let i = 0; i < l.cols.length; i++) acc.add(l.cols[i], sign * dot(g, l.jac[i]))
  }
  const azimuthGrad = (enu: Vec3): Vec3 => {
    const h2 = enu[0] * enu[0] + enu[1] * enu[1]
    return [enu[1] / h2, -enu[0] / h2, 0]
  }
  // grid E, N of a geodetic position and its Jacobian by (λ, φ)
  const gridJacobian = (p: GeodeticPoint) => {
    const f = (dl: number, dp: number) => proj.toGrid(p.lon + dl, p.lat + dp)
    const l1 = f(GRID_STEP, 0)
    const l0 = f(-GRID_STEP, 0)
    const q1 = f(0, GRID_STEP)
    const q0 = f(0, -GRID_STEP)
    const s = 1 / (2 * GRID_STEP)
    return { eL: (l1.e - l0.e) * s, nL: (l1.n - l0.n) * s, eP: (q1.e - q0.e) * s, nP: (q1.n - q0.n) * s }
  }

  const linearize = (x: Float64Array): LinearRow[] => {
    const pts = stationsOf(x)
    const outRows: LinearRow[] = []
    for (const row of rows) {
      if (row.type === 'vector') {
        const pa = pts[row.at]
        const pb = pts[row.to]
        const Ba = dXdx(row.at, pa)
        const Bb = dXdx(row.to, pb)
        const cols: number[] = []
        const raw: number[][] = [[], [], []]
        stationCols[row.at].forEach((c, i) => {
          if (c < 0) return
          cols.push(c)
          for (let r = 0; r < 3; r++) raw[r].push(-Ba[i][r])
        })
        stationCols[row.to].forEach((c, i) => {
          if (c < 0) return
          cols.push(c)
          for (let r = 0; r < 3; r++) raw[r].push(Bb[i][r])
        })
        const computed = sub(pb.x, pa.x)
        const mis = [row.d[0] - computed[0], row.d[1] - computed[1], row.d[2] - computed[2]]
        // whitening: the block times L⁻¹ (lower triangular), so the QR sees unit-variance rows
        const li = row.li
        for (let r = 0; r < 3; r++) {
          const coef = cols.map((_, c) => li[r * 3] * raw[0][c] + li[r * 3 + 1] * raw[1][c] + li[r * 3 + 2] * raw[2][c])
          const m = li[r * 3] * mis[0] + li[r * 3 + 1] * mis[1] + li[r * 3 + 2] * mis[2]
          outRows.push({ cols, coef, misclosure: m, sigma: 1, computed: computed[r] })
        }
        continue
      }
      const acc = new Acc()
      let computed: number
      let angular = true
      switch (row.type) {
        case 'slope': {
          const l = local(x, row.at, row.hi, row.to, row.ht)
          computed = Math.hypot(...l.enu)
          terms(acc, l, [l.enu[0] / computed, l.enu[1] / computed, l.enu[2] / computed])
          angular = false
          break
        }
        case 'hd': {
          const l = local(x, row.at, row.hi, row.to, row.ht)
          computed = Math.hypot(l.enu[0], l.enu[1])
          terms(acc, l, [l.enu[0] / computed, l.enu[1] / computed, 0])
          angular = false
          break
        }
        case 'zenith': {
          const l = local(x, row.at, row.hi, row.to, row.ht)
          const [e, n, up] = l.enu
          const h = Math.hypot(e, n)
          const S2 = h * h + up * up
          const S = Math.sqrt(S2)
          const R = normalSectionRadius(l.p1, Math.atan2(e, n))
          computed = Math.atan2(h, up) - (refraction.k * S) / (2 * R)
          terms(acc, l, [(e * up) / (S2 * h), (n * up) / (S2 * h), -h / S2])
          break
        }
        case 'azimuth':
        case 'direction': {
          const l = local(x, row.at, row.hi, row.to, row.ht)
          computed = Math.atan2(l.enu[0], l.enu[1])
          terms(acc, l, azimuthGrad(l.enu))
          if (row.type === 'direction') {
            computed -= x[setCol[row.set]]
            acc.add(setCol[row.set], -1)
          }
          break
        }
        case 'angle': {
          const lt = local(x, row.at, row.hi, row.to, row.ht)
          const lb = local(x, row.at, row.hi, row.from, row.ht)
          computed = Math.atan2(lt.enu[0], lt.enu[1]) - Math.atan2(lb.enu[0], lb.enu[1])
          terms(acc, lt, azimuthGrad(lt.enu))
          terms(acc, lb, azimuthGrad(lb.enu), -1)
          break
        }
        case 'dh': {
          computed = pts[row.to].h - pts[row.at].h
          acc.add(stationCols[row.at][2], -1)
          acc.add(stationCols[row.to][2], 1)
          angular = false
          break
        }
        case 'coord': {
          const p = pts[row.st]
          const [ce, cn, cu] = stationCols[row.st]
          angular = false
          if (row.comp === 2) {
            computed = p.h - geoid
            acc.add(cu, 1)
          } else {
            const g = proj.toGrid(p.lon, p.lat)
            const j = gridJacobian(p)
            computed = row.comp === 0 ? g.e : g.n
            acc.add(ce, (row.comp === 0 ? j.eL : j.nL) / scaleE[row.st])
            acc.add(cn, (row.comp === 0 ? j.eP : j.nP) / scaleN[row.st])
          }
          break
        }
      }
      const misclosure = angular ? wrapPi(row.value - computed) : row.value - computed
      outRows.push({ cols: acc.cols, coef: acc.coef, misclosure, sigma: row.sigma, computed })
    }
    return outRows
  }

  const blocks = new Int32Array(u)
  setStation.forEach((k, s) => (blocks[setCol[s]] = k))
  stationCols.forEach((sc, k) => sc.forEach((j) => j >= 0 && (blocks[j] = k)))
  // free network: the three translations in X, Y, Z as each station's (x_e, x_n, x_u), weight 1 on every station
  const nullSpace = free
    ? (x: Float64Array) => {
        const g = [new Float64Array(u), new Float64Array(u), new Float64Array(u)]
        const weights = new Float64Array(u)
        for (let k = 0; k < nS; k++) {
          const p = stationAt(x, k)
          const [ce, cn, cu] = stationCols[k]
          const fe = ((p.nu + p.h) * p.cosLat) / scaleE[k]
          const fn = (p.rho + p.h) / scaleN[k]
          for (let t = 0; t < 3; t++) {
            g[t][ce] = p.east[t] / fe
            g[t][cn] = p.north[t] / fn
            g[t][cu] = p.up[t]
          }
          weights[ce] = weights[cn] = weights[cu] = 1
        }
        return { g, weights }
      }
    : undefined
  const problem: NonlinearProblem = {
    u, labels, tolerance, x0, linearize, blocks, nullSpace,
    cofactorGroups: () => {
      const own = (k: number) => [...stationCols[k]].filter((c) => c >= 0)
      const groups = names.map((_, k) => own(k))
      for (const r of rows) {
        if (r.type === 'coord' || r.type === 'dh') continue
        groups.push([...own(r.at), ...own(r.to)])
        if (r.type === 'angle') groups.push([...own(r.at), ...own(r.from)])
      }
      return groups
    },
  }

  // ---- solve -----------------------------------------------------------------------------
  const outcome = solveNonlinear(problem, settings.maxIterations, ctx.solveOptions)
  if (!outcome.ok) {
    if (outcome.code === 'not_converged') {
      return fail('not_converged', `the combined 3D adjustment did not converge in ${outcome.iterations} iterations (last step ${outcome.maxStep.toExponential(2)} × tolerance): check for gross errors and approximate coordinates`)
    }
    const dep = outcome.dependent.map((j) => labels[j])
    const st = [...new Set(dep.map((l) => /^station (.+) \((east|north|height)\)$/.exec(l)?.[1] ?? /at station (.+)$/.exec(l)?.[1] ?? null).filter((s): s is string => s !== null))]
    return fail('singular', `the combined 3D network is singular: ${dep.slice(0, 6).join(', ')}${dep.length > 6 ? ` and ${dep.length - 6} more` : ''} cannot be determined from the observations; check how ${st.length ? st.join(', ') : 'these'} ${st.length > 1 ? 'are' : 'is'} tied to the rest of the network`, st)
  }
  timings.factorizationMs += outcome.timings.factorizationMs
  timings.orderingMs += outcome.timings.orderingMs

  // ---- statistics ------------------------------------------------------------------------
  const t0 = performance.now()
  const { x, qxx } = outcome
  const lin = outcome.rows
  const n = lin.length
  const r = n - (u - outcome.datumDefect)
  let vpv = 0
  for (const row of lin) vpv += (row.misclosure / row.sigma) ** 2
  const sigma0Sq = r > 0 ? vpv / r : null
  const estimated = settings.scaling === 'a-posteriori' && sigma0Sq !== null
  const varFactor = estimated ? sigma0Sq! : 1
  const sigma0 = sigma0Sq === null ? null : Math.sqrt(sigma0Sq)
  const d0 = delta0Of(settings.alpha0, settings.beta0)
  const wCrit = wCritical(settings.alpha0)
  const tCrit = tauCritical(settings.alpha0, r)
  const limits = { wCrit, tCrit, delta0: d0, sigma0 }

  const scalarRows: LinearRow[] = []
  const scalarOut: number[] = []
  const scalarScale: number[] = []
  const vectorAt: { row: Extract<Row3, { type: 'vector' }>; first: number }[] = []
  {
    let i = 0
    for (const row of rows) {
      if (row.type === 'vector') {
        vectorAt.push({ row, first: i })
        i += 3
        continue
      }
      scalarRows.push(lin[i++])
      scalarOut.push(row.out)
      const angular = row.type === 'zenith' || row.type === 'azimuth' || row.type === 'direction' || row.type === 'angle'
      scalarScale.push(angular ? RHO_ARCSEC : 1)
    }
  }
  testObservations(scalarRows, outputs, scalarOut, scalarScale, qxx, stationCols, settings, limits)
  const stationOfCol = new Int32Array(u).fill(-1)
  stationCols.forEach((sc, st) => sc.forEach((j) => j >= 0 && (stationOfCol[j] = st)))
  const pts = stationsOf(x)
  for (const { row, first } of vectorAt) {
    testVector(lin.slice(first, first + 3), row, outputs, qxx, pts[row.at], settings, limits, { vpv, r, estimated, stationOfCol })
  }

  // ---- stations --------------------------------------------------------------------------
  const scale95 = ellipseScale(settings.confidence, estimated, r)
  const { stationOut, allNames } = stationShells(input.controls, obsList, controlByName, free)
  // grid E, N of each station and the Jacobian of (E, N) by its unknowns (2×3, held columns zero)
  const gridJ = pts.map((p, k) => {
    const j = gridJacobian(p)
    const [ce, cn] = stationCols[k]
    return ce < 0 ? null : { e: [j.eL / scaleE[k], j.eP / scaleN[k]], n: [j.nL / scaleE[k], j.nP / scaleN[k]], ce, cn }
  })
  /** grid covariance block between stations a and b (2×2, scaled) */
  const gridCov = (a: number, b: number) => {
    const ja = gridJ[a]
    const jb = gridJ[b]
    if (!ja || !jb) return [0, 0, 0, 0]
    const ca = [ja.ce, ja.cn]
    const cb = [jb.ce, jb.cn]
    const q = [0, 1].map((i) => [0, 1].map((j) => qxx.get(ca[i], cb[j])))
    const rowA = [ja.e, ja.n]
    const rowB = [jb.e, jb.n]
    const out = [0, 0, 0, 0]
    for (let p = 0; p < 2; p++) for (let s = 0; s < 2; s++) {
      let v = 0
      for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++) v += rowA[p][i] * q[i][j] * rowB[s][j]
      out[p * 2 + s] = v * varFactor
    }
    return out
  }
  names.forEach((s, k) => {
    const st = stationOut.get(s)!
    const p = pts[k]
    const g = proj.toGrid(p.lon, p.lat)
    st.east = heldHz[k] ? control[k]!.east : g.e
    st.north = heldHz[k] ? control[k]!.north : g.n
    st.height = heldUp[k] ? control[k]!.height : p.h - geoid
    const cu = stationCols[k][2]
    st.sdHeight = cu >= 0 ? Math.sqrt(Math.max(qxx.get(cu, cu) * varFactor, 0)) : 0
    if (gridJ[k]) {
      const c = gridCov(k, k)
      st.sdEast = Math.sqrt(Math.max(c[0], 0))
      st.sdNorth = Math.sqrt(Math.max(c[3], 0))
      st.ellipse = roundEllipse(ellipseFromCovariance(c[0], c[3], c[1]))
      st.ellipse95 = roundEllipse(ellipseFromCovariance(c[0], c[3], c[1], scale95))
    } else {
      st.sdEast = 0
      st.sdNorth = 0
    }
  })

  // ---- relative precision between connected stations -------------------------------------
  const relative: RelativeResult[] = []
  const seen = new Set<string>()
  for (const row of rows) {
    if (row.type === 'coord') continue
    const pairs: [number, number][] = row.type === 'angle' ? [[row.at, row.from], [row.at, row.to]] : [[row.at, row.to]]
    for (const [a, b] of pairs) {
      const key = a < b ? `${a}:${b}` : `${b}:${a}`
      if (a === b || seen.has(key)) continue
      seen.add(key)
      if (!gridJ[a] && !gridJ[b]) continue
      const aa = gridCov(a, a)
      const bb = gridCov(b, b)
      const ab = gridCov(a, b)
      const qee = aa[0] + bb[0] - 2 * ab[0]
      const qnn = aa[3] + bb[3] - 2 * ab[3]
      const qen = aa[1] + bb[1] - ab[1] - ab[2]
      const A = stationOut.get(names[a])!
      const B = stationOut.get(names[b])!
      const de = B.east! - A.east!
      const dn = B.north! - A.north!
      const dist = Math.hypot(de, dn)
      const e1 = ellipseFromCovariance(qee, qnn, qen)
      relative.push({
        from: names[a], to: names[b], distance: dist,
        semiMajor: e1.semiMajor, semiMinor: e1.semiMinor, azimuthDeg: roundEllipse(e1).azimuthDeg, semiMajor95: e1.semiMajor * scale95,
        sdDistance: Math.sqrt(Math.max(((de * de) * qee + (dn * dn) * qnn + 2 * de * dn * qen) / (dist * dist), 0)),
      })
    }
  }
  timings.statisticsMs += performance.now() - t0 + outcome.timings.cofactorMs

  const globalTest = globalTestOf(vpv, r, settings.alpha)
  const summary: Network3dSummary = {
    dof: r,
    sigma0,
    globalTest,
    counts: { n, u, r },
    iterations: outcome.iterations,
    tauCritical: tCrit,
    conditionEstimate: outcome.conditionEstimate,
    dominant: outcome.dominant === null ? null : labels[outcome.dominant],
    vectors: vectorAt.length,
    geoidSeparationM: geoid,
    ellipsoid: { a: ell.a, inverseFlattening: ell.es > 0 ? 1 / (1 - Math.sqrt(1 - ell.es)) : null },
    deflectionOfVerticalIgnored: true,
    heightsAssumed: assumed.sort(),
    // as the vector tests ran (F needs r > q; a vector short of redundancy falls back to χ²)
    vectorTest: outputs.some((o) => o.vectorTest?.distribution === 'F') ? 'F' : 'chi2',
  }
  return {
    converged: true,
    iterations: outcome.iterations,
    dof: r,
    sigma0,
    globalTest,
    stations: allNames.map((s) => stationOut.get(s)!),
    observations: outputs,
    relative,
    health: { conditionEstimate: summary.conditionEstimate, dominant: summary.dominant },
    counts: { n, u, r },
    critical: { w: wCrit, tau: tCrit, delta0: d0 },
    settings,
    refraction: { k: refraction.k, sigmaK: refraction.sigmaK, zeniths },
    network3d: summary,
  }
}

/**
 * Statistics of one GNSS baseline from its three whitened rows: per component
 * the residual, redundancy number, w, τ, MDB and its effect; for the whole
 * vector the test T = ṽᵀ R̃⁺ ṽ and the residual in the local east, north, up.
 */
function testVector(
  rows: LinearRow[],
  row: { outs: [number, number, number]; l: Float64Array; li: Float64Array },
  outputs: ObservationResult[],
  qxx: CofactorMatrix,
  atPoint: GeodeticPoint,
  settings: AdjustSettings,
  limits: { wCrit: number; tCrit: number | null; delta0: number; sigma0: number | null },
  net: { vpv: number; r: number; estimated: boolean; stationOfCol: Int32Array },
): void {
  const { l, li } = row
  const cols = rows[0].cols
  const k = cols.length
  // the vector's block of Q_xx, read once (its unknowns are the same on all three rows)
  const qb = new Float64Array(k * k)
  for (let p = 0; p < k; p++) for (let q = p; q < k; q++) qb[p * k + q] = qb[q * k + p] = qxx.get(cols[p], cols[q])
  // R̃ = I − Ã·Q·Ãᵀ (whitened Q_vv)
  const aq = rows.map((rw) => {
    const out = new Float64Array(k)
    for (let p = 0; p < k; p++) {
      let s = 0
      for (let q = 0; q < k; q++) s += qb[p * k + q] * rw.coef[q]
      out[p] = s
    }
    return out
  })
  const Rt = new Float64Array(9)
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) {
    let s = 0
    for (let p = 0; p < k; p++) s += rows[i].coef[p] * aq[j][p]
    Rt[i * 3 + j] = (i === j ? 1 : 0) - s
  }
  const vt = rows.map((rw) => -rw.misclosure) // whitened residuals
  const v = mul3(l, vt) // residuals in ECEF, metres
  // Q_vv·P = L·R̃·L⁻¹; P·Q_vv·P = L⁻ᵀ·R̃·L⁻¹; P·v = L⁻ᵀ·ṽ
  const qvvP = mul33(mul33(l, Rt), li)
  const liT = transpose(li)
  const pqp = mul33(mul33(liT, Rt), li)
  const pv = mul3(liT, vt)
  const sigmas = [Math.sqrt(l[0] ** 2), Math.hypot(l[3], l[4]), Math.hypot(l[6], l[7], l[8])]
  for (let c = 0; c < 3; c++) {
    const out = outputs[row.outs[c]]
    const ri = Math.min(Math.max(qvvP[c * 4], 0), 1)
    out.residual = v[c]
    out.sigma = sigmas[c]
    out.adjusted = out.observed + v[c]
    out.redundancy = ri
    out.weak = ri < settings.weakRedundancy
    const den = pqp[c * 4]
    if (ri > UNCONTROLLED && den > 0) {
      const w = pv[c] / Math.sqrt(den)
      out.w = w
      if (limits.sigma0 !== null && limits.sigma0 > 0 && limits.tCrit !== null) {
        out.tau = w / limits.sigma0
        out.tauFlagged = Math.abs(out.tau) > limits.tCrit
      }
      const mdb = limits.delta0 / Math.sqrt(den)
      out.mdb = mdb
      // the bias e_c·MDB whitened: L⁻¹·e_c·MDB, as one combined row over the vector's unknowns
      const ac = new Array<number>(k).fill(0)
      for (let r = 0; r < 3; r++) for (let p = 0; p < k; p++) ac[p] += li[r * 3 + c] * rows[r].coef[p]
      // its effect Δx = Q_xx·ãᵀ·MDB at the vector's two stations (the larger shift)
      const shift = new Map<number, number>()
      for (let p = 0; p < k; p++) {
        let dx = 0
        for (let q = 0; q < k; q++) dx += qb[p * k + q] * ac[q]
        const st = net.stationOfCol[cols[p]]
        shift.set(st, (shift.get(st) ?? 0) + (dx * mdb) ** 2)
      }
      out.mdbEffect = Math.sqrt(Math.max(0, ...shift.values()))
    }
  }
  // the whole-vector test with the pseudo-inverse of R̃ (rank q)
  const { values, vectors } = symmetricEigen3(Rt)
  let T = 0
  let q = 0
  for (let i = 0; i < 3; i++) {
    if (values[i] <= UNCONTROLLED) continue
    q++
    const proj = vectors[i][0] * vt[0] + vectors[i][1] * vt[1] + vectors[i][2] * vt[2]
    T += (proj * proj) / values[i]
  }
  if (q === 0) return
  let test: VectorTest
  const enu = toEnu(atPoint, v as Vec3)
  if (net.estimated && net.r - q > 0) {
    const rest = Math.max(net.vpv - T, 0) / (net.r - q)
    const F = rest > 0 ? T / q / rest : Infinity
    const crit = fQuantile(1 - settings.alpha0, q, net.r - q)
    test = { statistic: F, critical: crit, distribution: 'F', flagged: F > crit, residualEnu: enu }
  } else {
    const crit = chiSquareQuantile(1 - settings.alpha0, q)
    test = { statistic: T, critical: crit, distribution: 'chi2', flagged: T > crit, residualEnu: enu }
  }
  for (const o of row.outs) {
    outputs[o].vectorTest = test
    // data snooping flags the whole vector
    outputs[o].flagged = test.flagged
  }
}

function untested(): Pick<ObservationResult, 'residual' | 'redundancy' | 'w' | 'flagged' | 'tau' | 'tauFlagged' | 'mdb' | 'mdbEffect' | 'weak'> {
  return { residual: null, redundancy: null, w: null, flagged: false, tau: null, tauFlagged: false, mdb: null, mdbEffect: null, weak: false }
}

/** Inverse of a lower-triangular 3×3 (row-major). */
function lowerInverse(l: Float64Array): Float64Array {
  const m = new Float64Array(9)
  m[0] = 1 / l[0]
  m[4] = 1 / l[4]
  m[8] = 1 / l[8]
  m[3] = (-l[3] * m[0]) / l[4]
  m[7] = (-l[7] * m[4]) / l[8]
  m[6] = (-(l[6] * m[0] + l[7] * m[3])) / l[8]
  return m
}

function mul33(a: Float64Array, b: Float64Array): Float64Array {
  const c = new Float64Array(9)
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) c[i * 3 + j] = a[i * 3] * b[j] + a[i * 3 + 1] * b[3 + j] + a[i * 3 + 2] * b[6 + j]
  return c
}

function mul3(a: Float64Array, v: number[]): [number, number, number] {
  return [0, 1, 2].map((i) => a[i * 3] * v[0] + a[i * 3 + 1] * v[1] + a[i * 3 + 2] * v[2]) as [number, number, number]
}

function transpose(a: Float64Array): Float64Array {
  return Float64Array.from([a[0], a[3], a[6], a[1], a[4], a[7], a[2], a[5], a[8]])
}

/** Eigenvalues and unit eigenvectors of a symmetric 3×3 by cyclic Jacobi rotations. */
function symmetricEigen3(s: Float64Array): { values: number[]; vectors: number[][] } {
  const a = [[s[0], (s[1] + s[3]) / 2, (s[2] + s[6]) / 2], [0, s[4], (s[5] + s[7]) / 2], [0, 0, s[8]]]
  a[1][0] = a[0][1]
  a[2][0] = a[0][2]
  a[2][1] = a[1][2]
  const v = [[1, 0, 0], [0, 1, 0], [0, 0, 1]]
  for (let sweep = 0; sweep < 50; sweep++) {
    const off = a[0][1] ** 2 + a[0][2] ** 2 + a[1][2] ** 2
    if (off < 1e-30) break
    for (const [p, q] of [[0, 1], [0, 2], [1, 2]] as const) {
      if (Math.abs(a[p][q]) < 1e-300) continue
      const theta = (a[q][q] - a[p][p]) / (2 * a[p][q])
      const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1))
      const c = 1 / Math.sqrt(t * t + 1)
      const sn = t * c
      for (let k = 0; k < 3; k++) {
        const akp = a[k][p]
        const akq = a[k][q]
        a[k][p] = c * akp - sn * akq
        a[k][q] = sn * akp + c * akq
      }
      for (let k = 0; k < 3; k++) {
        const apk = a[p][k]
        const aqk = a[q][k]
        a[p][k] = c * apk - sn * aqk
        a[q][k] = sn * apk + c * aqk
      }
      for (let k = 0; k < 3; k++) {
        const vkp = v[k][p]
        const vkq = v[k][q]
        v[k][p] = c * vkp - sn * vkq
        v[k][q] = sn * vkp + c * vkq
      }
    }
  }
  return { values: [a[0][0], a[1][1], a[2][2]], vectors: [0, 1, 2].map((i) => [v[0][i], v[1][i], v[2][i]]) }
}
