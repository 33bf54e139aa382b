// Blunder detection, typed failures for unsolvable networks, and input errors.
import { describe, expect, it } from 'vitest'
import { adjustNetwork, formatReport } from '../../../server/engine/index'
import { ARC, fixed, gridNetwork, obs } from './helpers'

describe('datum setting words', () => {
  it("the former 'as-given' is still accepted and reads as 'as-stored', with the same solution", () => {
    const net = gridNetwork(3, 7)
    const now = adjustNetwork(net, { datum: 'as-stored' })
    const old = adjustNetwork(net, { datum: 'as-given' })
    expect(now.ok && old.ok).toBe(true)
    if (!now.ok || !old.ok) return
    expect(old.result.settings.datum).toBe('as-stored')
    expect(old.result.stations.map((x) => x.east)).toEqual(now.result.stations.map((x) => x.east))
    expect(adjustNetwork(net, { datum: 'held' as never }).ok).toBe(false)
  })
})

describe('data snooping on an invented network with a planted blunder', () => {
  const net = gridNetwork(4, 2024)
  const target = net.observations.findIndex((o) => o.kind === 'horizontal_distance' && o.at === 'P1_1' && o.to === 'P2_2')
  const planted = net.observations.map((o, i) => (i === target ? { ...o, value: o.value + 10 * o.sigma! } : o))

  it('the clean network passes the global test (seeded simulation)', () => {
    const r = adjustNetwork(net)
    expect(r.ok && r.result.globalTest.passed).toBe(true)
  })
  it('the 10σ error gets the largest |w|, is flagged, and the global test fails', () => {
    const r = adjustNetwork({ ...net, observations: planted })
    if (!r.ok) throw new Error(r.reason)
    const worst = [...r.result.observations].sort((a, b) => Math.abs(b.w ?? 0) - Math.abs(a.w ?? 0))[0]
    expect(worst.line).toBe(net.observations[target].line)
    expect(worst.flagged).toBe(true)
    expect(Math.abs(worst.w!)).toBeGreaterThan(3.29)
    expect(r.result.globalTest.passed).toBe(false)
    expect(r.result.observations).toHaveLength(planted.length)
  })
  it('excluding it makes the global test pass; the excluded row is reported with null statistics', () => {
    const r = adjustNetwork({ ...net, observations: planted.map((o, i) => (i === target ? { ...o, excluded: true } : o)) })
    if (!r.ok) throw new Error(r.reason)
    expect(r.result.globalTest.passed).toBe(true)
    const ex = r.result.observations.find((o) => o.line === net.observations[target].line)!
    expect(ex.excluded).toBe(true)
    expect(ex.residual).toBeNull()
    expect(ex.w).toBeNull()
    expect(r.result.observations.filter((o) => o.flagged)).toHaveLength(0)
  })
  it('an error of exactly MDB size, planted in noise-free data, gives |w| = δ0 = 4.13 (Baarda 1968) and moves the stations by the reported MDB effect', () => {
    // behavioural check, not the formula: plant the bias, re-adjust, measure
    const clean = gridNetwork(4, 2024, 0)
    const base = adjustNetwork(clean)
    if (!base.ok) throw new Error(base.reason)
    const pos = new Map(base.result.stations.map((s) => [s.name, s]))
    for (const kind of ['horizontal_distance', 'direction'] as const) {
      const i = clean.observations.findIndex((o) => o.kind === kind && o.at === 'P1_2')
      const o = base.result.observations[i]
      const mdb = o.residualUnit === 'arcsec' ? (o.mdb! * Math.PI) / (180 * 3600) : o.mdb!
      const biased = clean.observations.map((x, k) => (k === i ? { ...x, value: x.value + mdb } : x))
      const r = adjustNetwork({ controls: clean.controls, observations: biased }, { scaling: 'a-priori' })
      if (!r.ok) throw new Error(r.reason)
      expect(Math.abs(r.result.observations[i].w!)).toBeCloseTo(4.13, 2)
      const shift = Math.max(...r.result.stations.map((s) => Math.hypot(s.east! - pos.get(s.name)!.east!, s.north! - pos.get(s.name)!.north!)))
      expect(shift / o.mdbEffect!).toBeCloseTo(1, 3)
    }
  })
  it('the report is deterministic and carries the caution line', () => {
    const r = adjustNetwork(net)
    if (!r.ok) throw new Error(r.reason)
    const text = formatReport(r.result)
    expect(formatReport(r.result)).toBe(text)
    expect(text).toContain('must be checked against local regulations and licensed practice')
  })
})

describe('unsolvable networks give typed failures naming the cause', () => {
  const base = [
    obs({ line: 3, kind: 'direction', at: 'A', to: 'B', value: 0 }),
    obs({ line: 4, kind: 'direction', at: 'A', to: 'C', value: 0.5 }),
    obs({ line: 5, kind: 'horizontal_distance', at: 'A', to: 'C', value: 400 }),
    obs({ line: 6, kind: 'direction', at: 'B', to: 'A', value: 0 }),
    obs({ line: 7, kind: 'direction', at: 'B', to: 'C', value: 5.6 }),
  ]
  it('a station connected by one distance only', () => {
    const r = adjustNetwork({
      controls: [fixed('A', 0, 0), fixed('B', 0, 500)],
      observations: [...base, obs({ line: 8, kind: 'horizontal_distance', at: 'C', to: 'K7', value: 120 })],
    })
    expect(r.ok).toBe(false)
    if (r.ok) return
    expect(r.code).toBe('singular')
    expect(r.reason).toBe('station K7 is connected by one distance only')
    expect(r.stations).toEqual(['K7'])
  })
  it('one control point and no azimuth: no fixed orientation', () => {
    const r = adjustNetwork({ controls: [fixed('A', 0, 0)], observations: base })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.code).toBe('singular')
      expect(r.reason).toMatch(/^no fixed orientation: hold an azimuth or a second point/)
    }
  })
  it('no control at all, datum as stored', () => {
    const r = adjustNetwork({ controls: [], observations: base })
    expect(!r.ok && r.code === 'singular' && /no control/.test(r.reason)).toBe(true)
  })
  it('levelling without a benchmark height', () => {
    const r = adjustNetwork({ controls: [], observations: [obs({ line: 2, kind: 'height_difference', at: 'X', to: 'Y', value: 1, lengthKm: 1 })] })
    expect(!r.ok && r.code === 'singular' && /no height datum/.test(r.reason)).toBe(true)
  })
  it('a levelled point not connected to any benchmark names the station', () => {
    const r = adjustNetwork({
      controls: [fixed('BM', null, null, 10)],
      observations: [
        obs({ line: 2, kind: 'height_difference', at: 'BM', to: 'Y', value: 1, lengthKm: 1 }),
        obs({ line: 3, kind: 'height_difference', at: 'Q', to: 'Z', value: 1, lengthKm: 1 }),
      ],
    })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.code).toBe('singular')
      expect(r.stations).toEqual(['Q', 'Z'])
    }
  })
  it('collinear rays leave a station singular after approximation, named in the message', () => {
    // K lies on the line A–B and is only observed by directions from A and B: unknown distance along the line
    const r = adjustNetwork({
      controls: [fixed('A', 0, 0), fixed('B', 0, 1000)],
      observations: [
        obs({ line: 2, kind: 'direction', at: 'A', to: 'B', value: 0, sigma: ARC }),
        obs({ line: 3, kind: 'direction', at: 'A', to: 'K', value: 0, sigma: ARC }),
        obs({ line: 4, kind: 'direction', at: 'B', to: 'A', value: 0, sigma: ARC }),
        obs({ line: 5, kind: 'direction', at: 'B', to: 'K', value: 0, sigma: ARC }),
      ],
      approximate: [{ station: 'K', east: 0, north: 400 }],
    })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.code).toBe('singular')
      expect(r.stations).toContain('K')
      expect(r.reason).toMatch(/station K \((east|north)\)/)
    }
  })
  it('a station with no way to compute approximate coordinates is unplaceable', () => {
    const r = adjustNetwork({
      controls: [fixed('A', 0, 0), fixed('B', 0, 500)],
      observations: [
        ...base,
        obs({ line: 8, kind: 'direction', at: 'M', to: 'N', value: 0 }),
        obs({ line: 9, kind: 'direction', at: 'M', to: 'O', value: 1 }),
        obs({ line: 10, kind: 'horizontal_distance', at: 'M', to: 'N', value: 50 }),
        obs({ line: 11, kind: 'horizontal_distance', at: 'N', to: 'O', value: 50 }),
        obs({ line: 12, kind: 'horizontal_distance', at: 'M', to: 'O', value: 60 }),
      ],
    })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.code).toBe('unplaceable')
      expect(r.stations).toEqual(['M', 'N', 'O'])
    }
  })
  it('bad input names line and column and never throws', () => {
    const r = adjustNetwork({ controls: [fixed('A', 0, 0)], observations: [obs({ line: 17, kind: 'horizontal_distance', at: 'A', to: 'B', value: NaN })] })
    expect(r).toEqual({ ok: false, code: 'input', reason: 'line 17, column value: not a finite number' })
  })
  it('a Gauss–Newton run that cannot converge in the allowed iterations is a typed failure', () => {
    const net = gridNetwork(3, 9)
    const r = adjustNetwork(
      { ...net, approximate: [{ station: 'P1_1', east: 5000, north: 8000 }] },
      { maxIterations: 1 },
    )
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.code).toBe('not_converged')
  })
})
