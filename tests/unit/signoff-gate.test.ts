// Which statistical outcomes a signer must knowingly accept: the plane and the
// height network are judged separately, and a network without redundancy is
// not "passed" — its global test is not applicable (issue 11, finding 4).
import { describe, expect, it } from 'vitest'
import { adjustNetwork, type AdjustmentResult } from '../../server/engine/index'
import { failedTests } from '../../server/services/signoffs'
import { ARC, fixed, obs, ok } from './engine/helpers'

// the gate reads a run's stored summary and its count of flagged observations in use
const gateOf = (r: AdjustmentResult) => ({
  summary: { globalTest: r.globalTest, plane: r.plane ?? null, height: r.height ?? null },
  flaggedAny: r.observations.filter((o) => !o.excluded && (o.flagged || o.tauFlagged)).length,
})

describe('sign-off gate (failedTests)', () => {
  // invented: a polar point (r = 0 in the plane) and a levelled pair (r = 1)
  const controls = [fixed('A', 1000, 1000, 50), fixed('B', 1000, 1500)]
  const plane = [
    obs({ line: 2, kind: 'direction', at: 'A', to: 'B', value: 0, sigma: 3 * ARC }),
    obs({ line: 3, kind: 'direction', at: 'A', to: 'P', value: Math.PI / 2, sigma: 3 * ARC }),
    obs({ line: 4, kind: 'horizontal_distance', at: 'A', to: 'P', value: 200, sigma: 0.002 }),
  ]
  const levels = [
    obs({ line: 5, kind: 'height_difference', at: 'A', to: 'P', value: 1.5, sigma: 0.002 }),
    obs({ line: 6, kind: 'height_difference', at: 'P', to: 'A', value: -1.5005, sigma: 0.002 }),
  ]
  it('a plane network without redundancy needs the acknowledgement even when the height network passes', () => {
    const r = ok(adjustNetwork({ controls, observations: [...plane, ...levels] }))
    expect(r.height!.globalTest.passed).toBe(true)
    expect(failedTests(gateOf(r))).toEqual(['the plane network has no redundancy: its global test is not applicable and nothing in it is checked'])
  })
  it('a height network that fails is named on its own', () => {
    const r = ok(adjustNetwork({ controls, observations: [...plane, ...levels.map((o) => (o.line === 6 ? { ...o, value: -1.52 } : o))] }))
    expect(failedTests(gateOf(r))).toContain('failed its global test')
  })
})
