// The Gauss–Newton loop (lsq.ts) takes, between factorizations, steps that reuse
// the last R. Their fixed point must be the Gauss–Newton one: the adjusted
// network cannot depend on how far off the approximations were. Checked by
// starting the same invented network (helpers.ts) from its generator's truth
// and from approximations moved by up to ±10 m and ±40 m (spacing 200 m), on
// both paths.
import { describe, expect, it } from 'vitest'
import { adjustNetwork } from '../../../server/engine/index'
import { gridNetwork, ok, rng } from './helpers'

const net = gridNetwork(8, 5)
const fixedNames = new Set(net.controls.map((c) => c.station))
function start(offset: number, seed: number) {
  const r = rng(seed)
  return [...net.truth]
    .filter(([s]) => !fixedNames.has(s))
    .map(([station, [e, n]]) => ({ station, east: e + (r() - 0.5) * 2 * offset, north: n + (r() - 0.5) * 2 * offset }))
}

describe('the adjusted network does not depend on the approximations (same fixed point)', () => {
  for (const factorization of ['sparse', 'dense'] as const) {
    for (const offset of [10, 40]) {
      it(`${factorization}: from the truth and from approximations off by up to ±${offset} m, coordinates within 1e-7 m and σ, redundancy numbers within 1e-9 relative`, () => {
        const exact = ok(adjustNetwork({ ...net, approximate: start(0, 1) }, {}, { factorization }))
        const far = ok(adjustNetwork({ ...net, approximate: start(offset, 2 + offset) }, {}, { factorization }))
        expect(far.stations.map((s) => s.name)).toEqual(exact.stations.map((s) => s.name))
        far.stations.forEach((s, k) => {
          const t = exact.stations[k]
          expect(Math.abs(s.east! - t.east!)).toBeLessThan(1e-7)
          expect(Math.abs(s.north! - t.north!)).toBeLessThan(1e-7)
          if (t.sdEast) expect(Math.abs(s.sdEast! - t.sdEast) / t.sdEast).toBeLessThan(1e-9)
        })
        far.observations.forEach((o, k) => {
          const t = exact.observations[k]
          if (t.redundancy !== null) expect(Math.abs(o.redundancy! - t.redundancy)).toBeLessThan(1e-9)
        })
        expect(Math.abs(far.sigma0! - exact.sigma0!) / exact.sigma0!).toBeLessThan(1e-9)
      })
    }
  }
})
