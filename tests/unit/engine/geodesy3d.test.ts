// Earth-centred geometry of the 3D adjustment (server/engine/geodesy3d.ts)
// against proj4's own geocentric conversion ('+proj=geocent') on GRS80, and
// Euler's normal-section radius against its limits ρ (north) and ν (east).
import { describe, expect, it } from 'vitest'
import proj4 from 'proj4'
import { fromEcef, geodeticPoint, normalSectionRadius, toEcef } from '../../../server/engine/geodesy3d'

const GRS80 = { a: 6378137, es: 0.00669438002290 } // e² of GRS80 (Moritz 1980, Geodetic Reference System 1980)
const D2R = Math.PI / 180
const toCart = proj4('+proj=longlat +ellps=GRS80 +no_defs', '+proj=geocent +ellps=GRS80 +units=m +no_defs')

const cases: [number, number, number][] = [
  [15, 47, 1200], [-73.5, 40.7, -30], [151.2, -33.9, 45], [0, 0, 0], [100, 89.9, 2500], [-120, -75, 3000], [179.9, 12.3, 8800],
]

describe('geodetic ↔ ECEF on GRS80 against proj4 (+proj=geocent)', () => {
  it('toEcef agrees with proj4 within 0.1 mm', () => {
    for (const [lon, lat, h] of cases) {
      const p = toCart.forward([lon, lat, h]) as number[]
      const q = toEcef(GRS80, lat * D2R, lon * D2R, h)
      for (let c = 0; c < 3; c++) expect(Math.abs(q[c] - p[c])).toBeLessThan(1e-4)
    }
  })

  it('fromEcef inverts proj4 points: latitude and longitude within 1e-10 rad (0.6 mm), height within 0.1 mm', () => {
    for (const [lon, lat, h] of cases) {
      const p = toCart.forward([lon, lat, h]) as number[]
      const g = fromEcef(GRS80, [p[0], p[1], p[2]])
      expect(Math.abs(g.lat - lat * D2R)).toBeLessThan(1e-10)
      expect(Math.abs(g.lon - lon * D2R)).toBeLessThan(1e-10)
      expect(Math.abs(g.h - h)).toBeLessThan(1e-4)
    }
  })

  it('the local frame: up is the normal (∂X/∂h by differences of proj4), east and north are unit, orthogonal', () => {
    const [lon, lat, h] = cases[0]
    const a = toCart.forward([lon, lat, h + 1]) as number[]
    const b = toCart.forward([lon, lat, h - 1]) as number[]
    const p = geodeticPoint(GRS80, lat * D2R, lon * D2R, h)
    for (let c = 0; c < 3; c++) expect(p.up[c]).toBeCloseTo((a[c] - b[c]) / 2, 8)
    const dot = (u: number[], v: number[]) => u[0] * v[0] + u[1] * v[1] + u[2] * v[2]
    expect(dot(p.east, p.north)).toBeCloseTo(0, 14)
    expect(dot(p.east, p.up)).toBeCloseTo(0, 14)
    expect(dot(p.north, p.north)).toBeCloseTo(1, 14)
  })

  it('normal-section radius: ρ towards north, ν towards east (Euler)', () => {
    const p = geodeticPoint(GRS80, 47 * D2R, 15 * D2R, 0)
    expect(normalSectionRadius(p, 0)).toBeCloseTo(p.rho, 6)
    expect(normalSectionRadius(p, Math.PI / 2)).toBeCloseTo(p.nu, 6)
    // ρ < R(45°) < ν
    const r = normalSectionRadius(p, Math.PI / 4)
    expect(r).toBeGreaterThan(p.rho)
    expect(r).toBeLessThan(p.nu)
  })
})
