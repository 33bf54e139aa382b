// Regression: a zenith angle used as a trigonometric height difference reported
// its residual in arcseconds (sign flipped with the conversion) but kept the
// height row's standardized residual, so w and the residual disagreed in sign.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { adjustNetwork } from '../../../server/engine/index'
import { readObservationCsv } from '../../../server/engine/io/csv'

describe('standardized residuals', () => {
  it('have the sign of the reported residual for every kind (property)', () => {
    const read = readObservationCsv(readFileSync('server/db/demo/demo-network.csv', 'utf8'))
    if (!read.ok) throw new Error('demo file does not read')
    const outcome = adjustNetwork({ controls: read.controls, observations: read.observations })
    if (!outcome.ok) throw new Error(outcome.reason)
    const checked = outcome.result.observations.filter((o) => o.w !== null && o.residual !== null && Math.abs(o.residual) > 1e-9)
    const zeniths = checked.filter((o) => o.kind === 'zenith')
    expect(zeniths.length).toBeGreaterThan(10)
    for (const o of checked) expect(Math.sign(o.w!), `line ${o.line} ${o.kind}`).toBe(Math.sign(o.residual!))
    for (const o of checked.filter((x) => x.tau !== null)) expect(Math.sign(o.tau!)).toBe(Math.sign(o.residual!))
  })
})
