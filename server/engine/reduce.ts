// Grid and geometry: every measured row is carried to the quantity the plane or
// height network adjusts, on the surface of the project (../geodesy):
// directions, angles and azimuths to grid bearings of chords; slope distances
// (with their zenith or the known heights) and horizontal distances to grid
// lengths; zenith angles (with their slope distance) to height differences of
// the marks. Each reduced row carries its σ propagated from its own σ, its
// partner row's own σ and σ_k (numerical partial derivatives of the reduction),
// and the scale that takes a residual back to the row's own unit.

import { RHO_ARCSEC } from './geometry'
import { reduceSlopeWithHeights, reduceSlopeWithZenith, type Surface } from './geodesy'
import { HEIGHT_OF_INSTRUMENT_SIGMA } from './models/zenith'
import type { PlaneDef, PlaneRow } from './plane'
import type { XY } from './approx'
import type { ObservationRecord, ObservationResult } from './types'

/** A partner row's value and its own σ (mean of several when repeated). */
export interface Partner {
  value: number
  sigma: number
}

export interface PlaneItem {
  out: number
  rec: ObservationRecord
  def: Exclude<PlaneDef, { type: 'coord' }>
  /** σ of the row itself (its own or the profile's) */
  sigma: number
  /** the zenith of the same line, for a slope distance */
  zenith?: Partner
}

export interface HeightItem {
  out: number
  rec: ObservationRecord
  at: number
  to: number
  sigma: number
  /** the slope distance of the same line, for a zenith */
  slope?: Partner
}

export interface Refraction {
  k: number
  sigmaK: number
}

export interface ReductionGeometry {
  surface: Surface
  coords: XY[]
  /** plane station index → orthometric height of the mark (m) */
  height: (k: number) => number
  geoidSeparation: number
  refraction: Refraction
}

export interface ReductionStats {
  distances: number
  directions: number
  factors: { cf: number; ef: number; k: number }[]
  maxArcToChord: number
}

const DS = 1e-3
const DZ = 1e-7
const DK = 1e-3

export function reducePlane(items: PlaneItem[], g: ReductionGeometry, outputs: ObservationResult[]): { rows: PlaneRow[]; stats: ReductionStats } {
  const { surface, coords } = g
  const stats: ReductionStats = { distances: 0, directions: 0, factors: [], maxArcToChord: 0 }
  const ellH = (k: number) => g.height(k) + (surface.projected ? g.geoidSeparation : 0)
  const dirCorr = (at: number, to: number, ht: number | null) => {
    const a = coords[at]
    const b = coords[to]
    return surface.directionCorrection(a.e, a.n, b.e, b.n, ellH(to) + (ht ?? 0))
  }
  const local = surface.projected ? null : (surface as unknown as { projectHeight: number | null })
  const rows: PlaneRow[] = []
  for (const it of items) {
    const { def, rec } = it
    switch (def.type) {
      case 'direction': {
        const c = dirCorr(def.at, def.to, rec.ht)
        if (surface.projected) stats.directions++
        rows.push({ def, out: it.out, value: rec.value + c, sigma: it.sigma, outScale: RHO_ARCSEC })
        break
      }
      case 'angle': {
        const c = dirCorr(def.at, def.to, rec.ht) - dirCorr(def.at, def.from, rec.ht)
        if (surface.projected) stats.directions++
        rows.push({ def, out: it.out, value: rec.value + c, sigma: it.sigma, outScale: RHO_ARCSEC })
        break
      }
      case 'azimuth': {
        const a = coords[def.at]
        const b = coords[def.to]
        const c = surface.azimuthCorrection(a.e, a.n, b.e, b.n, ellH(def.to) + (rec.ht ?? 0))
        if (surface.projected) stats.directions++
        rows.push({ def, out: it.out, value: rec.value + c, sigma: it.sigma, outScale: RHO_ARCSEC })
        break
      }
      case 'distance': {
        const a = coords[def.at]
        const b = coords[def.to]
        const R = surface.radiusAlong(a.e, a.n, b.e, b.n)
        const kLine = surface.gridFactor(a.e, a.n, b.e, b.n)
        const h1 = ellH(def.at)
        const h2 = ellH(def.to)
        const hMean = (h1 + h2) / 2
        // the plane's own height: grid (projected: the ellipsoid, then k), or the project height, or each line's mean mark height
        const planeH = surface.projected ? 0 : local!.projectHeight ?? hMean
        const toPlane = kLine * ((R + planeH) / R)
        let grid: (S: number, z: number, k: number) => number
        let measuredIsHorizontal = false
        if (rec.kind === 'horizontal_distance') {
          measuredIsHorizontal = true
          // a horizontal distance as measured on a local plane without a project height stays as it is
          grid = (D) => (!surface.projected && local!.projectHeight === null ? D : D * (R / (R + hMean)) * toPlane)
        } else if (it.zenith) {
          const hi = rec.hi ?? 0
          grid = (S, z, k) => reduceSlopeWithZenith(S, z, h1 + hi, R, k).arc * toPlane
        } else {
          const hp1 = h1 + (rec.hi ?? 0)
          const hp2 = h2 + (rec.ht ?? 0)
          grid = (S) => (reduceSlopeWithHeights(S, hp1, hp2, R) ?? NaN) * toPlane
        }
        const S = rec.value
        const z = it.zenith?.value ?? 0
        const k = g.refraction.k
        const value = grid(S, z, k)
        if (!Number.isFinite(value)) {
          outputs[it.out].remark = 'not used: the height difference of its ends exceeds the slope distance'
          continue
        }
        const gS = (grid(S + DS, z, k) - grid(S - DS, z, k)) / (2 * DS)
        let var_ = (gS * it.sigma) ** 2
        if (it.zenith && !measuredIsHorizontal) {
          const gz = (grid(S, z + DZ, k) - grid(S, z - DZ, k)) / (2 * DZ)
          const gk = (grid(S, z, k + DK) - grid(S, z, k - DK)) / (2 * DK)
          var_ += (gz * it.zenith.sigma) ** 2 + (gk * g.refraction.sigmaK) ** 2
        }
        const ef = R / (R + hMean)
        stats.distances++
        stats.factors.push({ cf: ef * kLine, ef, k: kLine })
        const o = outputs[it.out]
        if (surface.projected || local!.projectHeight !== null) {
          o.combinedFactor = ef * kLine
          o.elevationFactor = ef
          o.scaleFactor = kLine
        }
        rows.push({ def, out: it.out, value, sigma: Math.sqrt(var_), outScale: 1 / gS })
        break
      }
    }
  }
  if (surface.projected) {
    for (const it of items) {
      if (it.def.type !== 'direction') continue
      const a = coords[it.def.at]
      const b = coords[it.def.to]
      const t = Math.abs((surface as unknown as { arcToChord(e1: number, n1: number, e2: number, n2: number): number }).arcToChord(a.e, a.n, b.e, b.n))
      if (t > stats.maxArcToChord) stats.maxArcToChord = t
    }
  }
  return { rows, stats }
}

/**
 * A zenith with its slope distance → the height difference of the marks and its
 * σ; `radius` of the normal section, `h1` the ellipsoidal height of the
 * instrument's mark (approximate: 1 m moves ΔH by less than 1e-6 m at 7 km).
 */
export function reduceZenith(
  rec: ObservationRecord,
  zSigma: number,
  slope: Partner,
  h1: number,
  radius: number,
  refraction: Refraction,
): { value: number; sigma: number; outScale: number } {
  const hi = rec.hi ?? 0
  const ht = rec.ht ?? 0
  const f = (S: number, z: number, k: number) => reduceSlopeWithZenith(S, z, h1 + hi, radius, k).dh + hi - ht
  const S = slope.value
  const z = rec.value
  const k = refraction.k
  const value = f(S, z, k)
  const fS = (f(S + DS, z, k) - f(S - DS, z, k)) / (2 * DS)
  const fz = (f(S, z + DZ, k) - f(S, z - DZ, k)) / (2 * DZ)
  const fk = (f(S, z, k + DK) - f(S, z, k - DK)) / (2 * DK)
  const sHiHt = (rec.hi !== null ? HEIGHT_OF_INSTRUMENT_SIGMA ** 2 : 0) + (rec.ht !== null ? HEIGHT_OF_INSTRUMENT_SIGMA ** 2 : 0)
  const sigma = Math.sqrt((fS * slope.sigma) ** 2 + (fz * zSigma) ** 2 + (fk * refraction.sigmaK) ** 2 + sHiHt)
  return { value, sigma, outScale: RHO_ARCSEC / fz }
}
