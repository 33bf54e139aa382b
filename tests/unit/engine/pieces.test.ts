// A network in two pieces that share no observation: each piece is placed and
// adjusted from its own control (regression: the second piece used to fail as
// 'unplaceable' because the local frame was seeded in the first piece only), and
// a piece without control still fails, naming its stations.
// Networks: invented perturbed grids (helpers.ts); the truth is the generator's.
import { describe, expect, it } from 'vitest'
import { adjustNetwork } from '../../../server/engine/index'
import type { ControlRecord, ObservationRecord } from '../../../server/engine/types'
import { gridNetwork, ok } from './helpers'

const a = gridNetwork(4, 1)
const b = gridNetwork(5, 2)
// piece B renamed and moved 20 km east (its control and truth with it)
const SHIFT = 20000
const rename = (s: string) => `B${s}`
const bControls: ControlRecord[] = b.controls.map((c) => ({ ...c, station: rename(c.station), east: c.east! + SHIFT }))
const bObs: ObservationRecord[] = b.observations.map((o) => ({ ...o, at: rename(o.at), to: rename(o.to), line: o.line + 10000 }))
const truthB = new Map([...b.truth].map(([s, [e, n]]) => [rename(s), [e + SHIFT, n] as [number, number]]))

describe('a network in two pieces, each with its own control', () => {
  for (const factorization of ['sparse', 'dense'] as const) {
    it(`adjusts (${factorization}): each piece's coordinates are those of the piece adjusted alone and within 1 cm of the generator's truth`, () => {
      const both = ok(adjustNetwork({ controls: [...a.controls, ...bControls], observations: [...a.observations, ...bObs] }, {}, { factorization }))
      const aloneA = ok(adjustNetwork({ controls: a.controls, observations: a.observations }, {}, { factorization }))
      const aloneB = ok(adjustNetwork({ controls: bControls, observations: bObs }, {}, { factorization }))
      expect(both.stations).toHaveLength(16 + 25)
      const byName = new Map(both.stations.map((s) => [s.name, s]))
      for (const alone of [aloneA, aloneB]) {
        for (const s of alone.stations) {
          const t = byName.get(s.name)!
          expect(Math.abs(t.east! - s.east!)).toBeLessThan(1e-7)
          expect(Math.abs(t.north! - s.north!)).toBeLessThan(1e-7)
        }
      }
      // the degrees of freedom add up: the pieces are independent
      expect(both.dof).toBe(aloneA.dof + aloneB.dof)
      for (const [name, [e, n]] of [...a.truth, ...truthB]) {
        const s = byName.get(name)!
        expect(Math.hypot(s.east! - e, s.north! - n)).toBeLessThan(0.01)
      }
    })
  }

  it('a piece with one control point only (rotation unknown) fails, naming the stations of that piece', () => {
    const r = adjustNetwork({ controls: [...a.controls, bControls[0]], observations: [...a.observations, ...bObs] })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.code).toBe('unplaceable')
      const expected = [...truthB.keys()].filter((s) => s !== bControls[0].station)
      expect([...r.stations!].sort()).toEqual(expected.sort())
    }
  })

  it('a piece with no control fails, naming every station of that piece and none of the other', () => {
    const r = adjustNetwork({ controls: a.controls, observations: [...a.observations, ...bObs] })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.code).toBe('unplaceable')
      expect([...r.stations!].sort()).toEqual([...truthB.keys()].sort())
      expect(r.reason).toContain('BP2_2')
      expect(r.reason).not.toContain(' P2_2')
    }
  })
})
