// Accuracy standards: FGDC 95 % circular accuracy, ALTA/NSPS relative
// precision allowables, and pass/fail at the boundary.
import { describe, expect, it } from 'vitest'
import { checkAccuracy, defaultSignStations } from '../../server/services/accuracy-check'
import type { ResultLike } from '../../server/services/accuracy-check'
import { allowableRelative } from '../../server/services/accuracy'
import { fgdcCircular95FromAxes, fgdcHorizontal95, standardEllipseAxes } from '../../server/services/tolerance'
import type { ToleranceProfileRow } from '../../server/services/tolerance'

const profile = (kind: ToleranceProfileRow['kind'], params: Record<string, number>): ToleranceProfileRow => ({
  id: 1, firmId: 1, name: `test ${kind}`, kind, params, source: 'test', retiredAt: null, createdAt: new Date(), updatedAt: new Date(),
})

describe('FGDC-STD-007.2-1998 horizontal accuracy at 95 % (circular)', () => {
  // Published values: NGS "Local and Network Accuracy Data Sheets" (program lna_ret 2.7.24,
  // retrieved 2025-02-20), which state that Horiz is "the horizontal accuracy at the 95 %
  // confidence level per FGDC Geospatial Positioning Accuracy Standards" and list SD_N,
  // SD_E (cm, rounded to 0.01) and CorrNE. [label, Horiz cm, SD_N cm, SD_E cm, CorrNE]
  const sheets: [string, number, number, number, number][] = [
    ['GV0652 network', 2.79, 1.09, 1.16, -0.29902673],
    ['GV0652–GV6114 local', 2.07, 0.80, 0.89, -0.10127264],
    ['GV0652–GV6157 local', 1.99, 0.93, 0.64, +0.12238238],
    ['GV0652–GV6064 local', 1.15, 0.48, 0.46, +0.00521369],
    ['GV0652–GV6102 local', 2.37, 1.07, 0.84, +0.04196526],
    ['GW1129 network', 1.71, 0.76, 0.59, +0.34469534],
    ['GW1129–GW2602 local', 1.06, 0.42, 0.38, +0.74478411],
    ['GW1129–GW2702 local', 1.87, 0.78, 0.67, +0.57468556],
    ['EH0846 network', 0.92, 0.38, 0.37, -0.10178715],
    ['EH0846–EH0875 local', 0.98, 0.43, 0.36, -0.15060678],
  ]
  // The sheets round σ to 0.01 cm, which moves the radius by up to about 0.012 cm;
  // the printed radius is itself rounded to 0.01 cm.
  it.each(sheets)('NGS data sheet %s: %f cm', (_label, horiz, sdN, sdE, corr) => {
    expect(Math.abs(fgdcHorizontal95(sdE, sdN, corr) - horiz)).toBeLessThanOrEqual(0.02)
  })

  it('differs from the NSSDA circular shortcut 2.4477·(σx+σy)/2 where the sheet can tell them apart (GV0652 network)', () => {
    // FGDC-STD-007.3-1998 (NSSDA) Appendix 3-A shortcut, valid only for near-circular errors; from memory.
    const nssda = 2.4477 * 0.5 * (1.16 + 1.09)
    expect(Math.abs(nssda - 2.79)).toBeGreaterThan(0.03)
    expect(Math.abs(fgdcHorizontal95(1.16, 1.09, -0.29902673) - 2.79)).toBeLessThan(0.01)
  })

  it('approaches the exact circular and linear 95 % factors at its ends', () => {
    // Exact: √χ²(2, 0.95) = √5.991 = 2.4477 and z(0.975) = 1.9600 (NIST/SEMATECH e-Handbook §1.3.6.7).
    expect(fgdcCircular95FromAxes(1, 1)).toBeCloseTo(2.450762, 6)
    expect(Math.abs(fgdcCircular95FromAxes(1, 1) / 2.4477 - 1)).toBeLessThan(0.002)
    expect(Math.abs(fgdcCircular95FromAxes(1, 0) / 1.96 - 1)).toBeLessThan(0.001)
  })

  it('takes the correlation into the ellipse axes (property: a² + b² = σE² + σN²)', () => {
    const { a, b } = standardEllipseAxes(0.012, 0.008, 0.6)
    expect(a * a + b * b).toBeCloseTo(0.012 ** 2 + 0.008 ** 2, 15)
    expect(a * b).toBeCloseTo(0.012 * 0.008 * Math.sqrt(1 - 0.36), 15) // det Σ = σE²σN²(1 − ρ²)
  })
})

describe('ALTA/NSPS 2021 relative positional precision: 2 cm + 50 ppm', () => {
  // ALTA/NSPS Minimum Standard Detail Requirements (2021), section 3.E: 2 cm (0.07 ft) + 50 ppm.
  it.each([
    [0, 0.020],
    [100, 0.025],
    [400, 0.040],
    [1000, 0.070],
    [2500, 0.145],
  ])('allowable at %f m is %f m', (distance, expected) => {
    expect(allowableRelative({ kind: 'relative_ppm', params: { mm: 20, ppm: 50 } }, distance)).toBeCloseTo(expected, 12)
  })

  const pair = (value: number, distance = 100): ResultLike => ({
    stations: [
      { name: 'A', east: 0, north: 0, height: null, sdEast: null, sdNorth: null, sdHeight: null, ellipse: null, ellipse95: null, fixed: true, kind: 'control', controlled: { east: true, north: true, height: false } },
      { name: 'B', east: distance, north: 0, height: null, sdEast: 0.004, sdNorth: 0.004, sdHeight: null, ellipse: { semiMajor: 0.004, semiMinor: 0.003, azimuthDeg: 10 }, ellipse95: { semiMajor: 0.0098, semiMinor: 0.0073, azimuthDeg: 10 }, fixed: false, kind: 'new', controlled: { east: false, north: false, height: false } },
    ],
    relative: [{ from: 'A', to: 'B', distance, semiMajor: value / 2.45, semiMinor: value / 3, azimuthDeg: 0, semiMajor95: value, sdDistance: value / 3 }],
    settings: { confidence: 0.95, scaling: 'a-posteriori' },
  })
  const alta = profile('relative_ppm', { mm: 20, ppm: 50, confidence: 0.95 })

  it('passes a pair exactly at the allowable ("may not exceed") and fails it 0.01 mm over', () => {
    const limit = 0.02 + 50e-6 * 100
    const at = checkAccuracy(alta, pair(limit))
    expect(at.items[0]).toMatchObject({ type: 'pair', from: 'A', to: 'B', passes: true })
    expect(at.items[0]!.allowable).toBeCloseTo(0.025, 12)
    expect(at.passed).toBe(true)
    const over = checkAccuracy(alta, pair(limit + 1e-5))
    expect(over.items[0]!.passes).toBe(false)
    expect(over.failing).toEqual(['A', 'B'])
    expect(over.passed).toBe(false)
  })

  it('offers only passing new stations for sign-off by default', () => {
    expect(defaultSignStations(pair(0.01), checkAccuracy(alta, pair(0.01)))).toEqual(['B'])
    expect(defaultSignStations(pair(0.03), checkAccuracy(alta, pair(0.03)))).toEqual([])
  })

  it('checks points, not pairs, for an FGDC profile, against the firm threshold', () => {
    const result = pair(0.01)
    result.stations[1]!.ellipse = { semiMajor: 0.01, semiMinor: 0.01, azimuthDeg: 0 } // r95 = 24.5 mm
    const strict = checkAccuracy(profile('fgdc_95', { thresholdMm: 20 }), result)
    expect(strict.items).toHaveLength(1)
    expect(strict.items[0]).toMatchObject({ type: 'point', from: 'B', passes: false })
    expect(strict.items[0]!.value).toBeCloseTo(0.0245076, 6)
    expect(checkAccuracy(profile('fgdc_95', { thresholdMm: 25 }), result).items[0]!.passes).toBe(true)
  })

  it('says so when no profile is chosen, and checks nothing', () => {
    const c = checkAccuracy(null, pair(0.01))
    expect(c.items).toEqual([])
    expect(c.note).toMatch(/No tolerance profile/)
  })
})
