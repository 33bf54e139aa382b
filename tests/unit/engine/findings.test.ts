// Regressions of a review of the engine (issue 11): each case failed before
// its fix. Invented data; expected values from definitions named beside them.
import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { adjustNetwork, formatReport, type ControlRecord } from '../../../server/engine/index'
import { readObservationCsv } from '../../../server/engine/io/csv'
import { aprioriSigma } from '../../../server/engine/models/registry'
import { DEFAULT_PROFILE, directionSigma } from '../../../server/engine/sigma'
import { ARC, fixed, obs, ok } from './helpers'

describe('zero redundancy: the global test is not applicable, per network', () => {
  // a polar point: one direction and one distance from a known line, nothing checks it
  const controls = [fixed('A', 1000, 1000, 50), fixed('B', 1000, 1500)]
  const observations = [
    obs({ line: 2, kind: 'direction', at: 'A', to: 'B', value: 0, sigma: 3 * ARC }),
    obs({ line: 3, kind: 'direction', at: 'A', to: 'P', value: Math.PI / 2, sigma: 3 * ARC }),
    obs({ line: 4, kind: 'horizontal_distance', at: 'A', to: 'P', value: 200, sigma: 0.002 }),
    obs({ line: 5, kind: 'height_difference', at: 'A', to: 'P', value: 1.5, sigma: 0.002 }),
    obs({ line: 6, kind: 'height_difference', at: 'P', to: 'A', value: -1.502, sigma: 0.002 }),
  ]
  const r = ok(adjustNetwork({ controls, observations }))
  it('r = 0 in the plane gives passed = null there (it used to say passed), while the height network with r = 1 is tested', () => {
    expect(r.plane!.dof).toBe(0)
    expect(r.plane!.globalTest.passed).toBeNull()
    expect(r.height!.dof).toBe(1)
    expect(typeof r.height!.globalTest.passed).toBe('boolean')
  })
  it('with r = 0 everywhere the whole run is not applicable either', () => {
    const r0 = ok(adjustNetwork({ controls, observations: observations.slice(0, 4) }))
    expect(r0.dof).toBe(0)
    expect(r0.globalTest.passed).toBeNull()
  })
})

describe('split control rows: "E N" and "H" rows of one station are merged', () => {
  const rows: ControlRecord[] = [
    { ...fixed('A', 1000, 1000), line: 1 },
    { ...fixed('A', null, null, 50), line: 2 },
    { ...fixed('B', 1000, 1500), line: 3 },
  ]
  const observations = [
    obs({ line: 4, kind: 'direction', at: 'A', to: 'B', value: 0, sigma: 3 * ARC }),
    obs({ line: 5, kind: 'direction', at: 'A', to: 'P', value: Math.PI / 2, sigma: 3 * ARC }),
    obs({ line: 6, kind: 'horizontal_distance', at: 'A', to: 'P', value: 200, sigma: 0.002 }),
    obs({ line: 7, kind: 'height_difference', at: 'A', to: 'P', value: 1.5, sigma: 0.002 }),
  ]
  it('the engine accepts them (it refused "given as control twice") and uses both parts', () => {
    const r = ok(adjustNetwork({ controls: rows, observations }))
    const p = r.stations.find((s) => s.name === 'P')!
    expect(p.east).toBeCloseTo(1200, 6)
    expect(p.height).toBeCloseTo(51.5, 9)
  })
  it('the same component twice is still refused, naming both lines', () => {
    const twice = adjustNetwork({ controls: [...rows, { ...fixed('A', null, null, 51), line: 9 }], observations })
    expect(!twice.ok && twice.code === 'input' && /line 9, column value: station A is given as control twice \(height already on line 2\)/.test(twice.reason)).toBe(true)
  })
})

describe('σ is finite and > 0 for every row, whatever its source', () => {
  const base = { controls: [fixed('A', 1000, 1000), fixed('B', 1000, 1500)] }
  const dir = (sigma: number | null) => [
    obs({ line: 2, kind: 'direction', at: 'A', to: 'B', value: 0, sigma }),
    obs({ line: 3, kind: 'direction', at: 'A', to: 'P', value: 1, sigma: ARC }),
    obs({ line: 4, kind: 'horizontal_distance', at: 'A', to: 'P', value: 100, sigma: 0.002 }),
  ]
  it.each([[0], [-1], [Number.NaN], [Number.POSITIVE_INFINITY]])('a row σ of %d is refused naming its line and column', (s) => {
    const r = adjustNetwork({ ...base, observations: dir(s) })
    expect(!r.ok && r.code === 'input' && /line 2, column sigma/.test(r.reason)).toBe(true)
  })
  it('a profile that gives σ = 0 is refused (it used to divide by zero)', () => {
    const zero = { ...DEFAULT_PROFILE, directionArcsec: 0, centeringInstrumentMm: 0, centeringTargetMm: 0 }
    const r = adjustNetwork({ ...base, observations: dir(null), profile: zero })
    expect(!r.ok && r.code === 'input' && /line 2, column sigma: the σ from the instrument profile is 0/.test(r.reason)).toBe(true)
  })
})

describe('instrument and target heights: one rule between a zenith and its slope distance', () => {
  it('a mismatch between the paired rows is refused naming both lines', () => {
    const r = adjustNetwork({
      controls: [fixed('A', 1000, 1000, 50), fixed('B', 1000, 1100)],
      observations: [
        obs({ line: 2, kind: 'direction', at: 'A', to: 'B', value: 0 }),
        obs({ line: 3, kind: 'slope_distance', at: 'A', to: 'B', value: 100, hi: 1.524, ht: 1.829 }),
        obs({ line: 4, kind: 'zenith', at: 'A', to: 'B', value: Math.PI / 2, hi: 5, ht: 6 }),
      ],
    })
    expect(!r.ok && r.code === 'input' && /line 4, column hi: hi 5\.000 m differs from 1\.524 m on line 3/.test(r.reason)).toBe(true)
  })
})

describe('paired rows use their partner\'s own σ', () => {
  // a trigonometric height from S = 500 m, z = 80°: σ²_ΔH ≈ (cos z·σ_S)² + (S·sin z·σ_z)² + (D²/2R·σk)²
  const S = 500
  const z = (80 * Math.PI) / 180
  const mk = (sigmaS: number) => ok(adjustNetwork({
    controls: [fixed('A', 1000, 1000, 50), fixed('B', 1000, 1000 + S * Math.sin(z))],
    observations: [
      obs({ line: 2, kind: 'direction', at: 'A', to: 'B', value: 0, sigma: ARC }),
      obs({ line: 3, kind: 'slope_distance', at: 'A', to: 'B', value: S, sigma: sigmaS }),
      obs({ line: 4, kind: 'zenith', at: 'A', to: 'B', value: z, sigma: 2 * ARC }),
    ],
    refraction: { k: 0.13, sigmaK: 0 },
  }))
  it('the zenith\'s σ (as a height) grows with the slope row\'s own σ (it used the profile\'s distance σ)', () => {
    const a = mk(0.001).observations.find((o) => o.line === 4)!.sigma!
    const b = mk(0.05).observations.find((o) => o.line === 4)!.sigma!
    // σ reported in arcsec: σ_ΔH / (S·sin z) in rad; the S term adds cos z·σ_S = 0.174·0.05 m ≈ 8.7 mm
    const hA = (a / 206264.806) * S * Math.sin(z)
    const hB = (b / 206264.806) * S * Math.sin(z)
    expect(hB ** 2 - hA ** 2).toBeCloseTo((Math.cos(z) ** 2) * (0.05 ** 2 - 0.001 ** 2), 6)
  })
})

describe('one σ function', () => {
  it('the σ the engine reports for a profile-weighted angle and direction is aprioriSigma of the row (the table used √2·σ without centering for angles)', () => {
    const controls = [fixed('A', 1000, 1000), fixed('B', 1000, 1100), fixed('C', 1200, 1000)]
    const observations = [
      obs({ line: 2, kind: 'angle', at: 'A', from: 'B', to: 'C', value: Math.PI / 2 }),
      obs({ line: 3, kind: 'direction', at: 'A', to: 'B', value: 0 }),
      obs({ line: 4, kind: 'direction', at: 'A', to: 'C', value: Math.PI / 2 }),
    ]
    const r = ok(adjustNetwork({ controls, observations }))
    const pos: Record<string, [number, number]> = { A: [1000, 1000], B: [1000, 1100], C: [1200, 1000] }
    const ctx = { profile: DEFAULT_PROFILE, length: (a: string, b: string) => Math.hypot(pos[b][0] - pos[a][0], pos[b][1] - pos[a][1]) }
    for (const o of observations) {
      const used = r.observations.find((x) => x.line === o.line)!.sigma! / 206264.80624709636
      expect(used).toBeCloseTo(aprioriSigma(o, ctx)!, 15)
    }
    // and the angle's σ is not √2·σ_dir: centering at 100 m and 200 m adds to it
    expect(aprioriSigma(observations[0], ctx)! / (Math.SQRT2 * DEFAULT_PROFILE.directionArcsec * ARC)).toBeGreaterThan(1.01)
    expect(aprioriSigma(obs({ kind: 'direction', at: 'A', to: 'Z', value: 1 }), { ...ctx, length: () => null })).toBeNull()
    expect(aprioriSigma(observations[1], ctx)).toBe(directionSigma(DEFAULT_PROFILE, 100))
  })
})

describe('project height on a local plane', () => {
  // the demo network is measured in 3D on a sphere with its plane at 65 m (server/db/demo/generate.ts)
  const read = readObservationCsv(readFileSync('server/db/demo/demo-network.csv', 'utf8'))
  if (!read.ok) throw new Error('demo file does not read')
  const input = { controls: read.controls, observations: read.observations.map((o) => (o.line === 118 ? { ...o, excluded: true } : o)) }
  it('distances are reduced to it, the report says so, and a wrong project height shows in the fit', () => {
    const right = ok(adjustNetwork({ ...input, projectHeightM: 65 }))
    expect(right.gridReduction!.projectHeightM).toBe(65)
    expect(right.gridReduction!.distances).toBe(read.observations.filter((o) => o.kind === 'slope_distance' || o.kind === 'horizontal_distance').length)
    expect(formatReport(right)).toContain('Project height: local plane at 65.000 m')
    expect(right.plane!.globalTest.passed).toBe(true)
    // 1 500 m too high: distances 2.4e-4 too long against the held pillars 1.8 km apart (≈ 0.4 m)
    const wrong = ok(adjustNetwork({ ...input, projectHeightM: 1565 }))
    expect(wrong.plane!.globalTest.passed).toBe(false)
  })
})
