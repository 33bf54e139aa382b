// GNSS baseline rows in the Tiepoint CSV (docs/file-format.md): value
// "ΔX ΔY ΔZ" in metres, sigma "σX σY σZ" in mm, optional correlation
// "ρXY ρXZ ρYZ". Every bad field must come back with its line and column.
// Positive definiteness is checked against ml-matrix's eigenvalues (an
// independent library), not against the reader's own Cholesky.
import { describe, expect, it } from 'vitest'
import { EigenvalueDecomposition, Matrix } from 'ml-matrix'
import { readObservationCsv } from '../../../server/engine/io/csv'
import type { ReadIssue, ReadResult } from '../../../server/engine/types'

const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note,correlation'

function ok(r: ReadResult) {
  if (!r.ok) throw new Error('expected ok, got errors: ' + JSON.stringify(r.errors))
  return r
}
function errors(rows: string[]): ReadIssue[] {
  const r = readObservationCsv(`${HEADER}\n${rows.join('\n')}\n`)
  if (r.ok) throw new Error('expected errors, got ok')
  expect('observations' in r).toBe(false)
  return r.errors
}
const err1 = (row: string) => errors([row])

describe('gnss_baseline rows', () => {
  it('reads a correlated vector: metres, σ in mm → m, ρ kept, value = the vector length', () => {
    const r = ok(readObservationCsv(`# vectors\n${HEADER}\ngnss_baseline,G1,,G2,300.000 -400.000 1200.000,m,3 4 12,,,,,session 1,0.2 -0.1 0.3\n`))
    const o = r.observations[0]!
    expect(o.line).toBe(3)
    expect(o.kind).toBe('gnss_baseline')
    expect([o.at, o.to, o.from]).toEqual(['G1', 'G2', null])
    // 300-400-1200 with 1300 as hypotenuse: 300² + 400² + 1200² = 1300² (exact by hand)
    expect(o.value).toBe(1300)
    expect(o.vector).toEqual({ d: [300, -400, 1200], sigma: [0.003, 0.004, 0.012], correlation: [0.2, -0.1, 0.3] })
    expect(o.sigma).toBeNull()
    expect(o.note).toBe('session 1')
    expect(r.warnings).toEqual([])
  })

  it('a blank correlation is uncorrelated (null), and the column may be left out of the header entirely', () => {
    const r = ok(readObservationCsv('kind,at,to,value,sigma\ngnss_baseline,G1,G2,1 2 2,5 5 8\n'))
    expect(r.observations[0]!.vector).toEqual({ d: [1, 2, 2], sigma: [0.005, 0.005, 0.008], correlation: null })
    expect(r.observations[0]!.value).toBe(3)
  })

  it.each([
    ['value has two numbers', 'gnss_baseline,G1,,G2,1 2,,3 3 3', 'value', /has 2 numbers: write three, ΔX ΔY ΔZ/],
    ['value part not a number', 'gnss_baseline,G1,,G2,1 2x 3,,3 3 3', 'value', /2x/],
    ['value blank', 'gnss_baseline,G1,,G2,,,3 3 3', 'value', /blank/],
    ['value zero vector', 'gnss_baseline,G1,,G2,0 0 0,,3 3 3', 'value', /zero length/],
    ['value over 1000 km', 'gnss_baseline,G1,,G2,2000000 0 0,,3 3 3', 'value', /too long/],
    ['unit in feet', 'gnss_baseline,G1,,G2,1 2 3,ft,3 3 3', 'unit', /metres only/],
    ['sigma blank', 'gnss_baseline,G1,,G2,1 2 3,,', 'sigma', /σX σY σZ in mm/],
    ['sigma one number', 'gnss_baseline,G1,,G2,1 2 3,,3', 'sigma', /has 1 number: write three/],
    ['sigma zero', 'gnss_baseline,G1,,G2,1 2 3,,3 0 3', 'sigma', /positive/],
    ['sigma not a number', 'gnss_baseline,G1,,G2,1 2 3,,3 a 3', 'sigma', /'a'/],
    ['correlation two numbers', 'gnss_baseline,G1,,G2,1 2 3,,3 3 3,,,,,,0.1 0.2', 'correlation', /has 2 numbers/],
    ['correlation of 1', 'gnss_baseline,G1,,G2,1 2 3,,3 3 3,,,,,,1 0 0', 'correlation', /between −1 and 1/],
    ['correlation below −1', 'gnss_baseline,G1,,G2,1 2 3,,3 3 3,,,,,,0 -1.5 0', 'correlation', /between −1 and 1/],
    ['correlation not a number', 'gnss_baseline,G1,,G2,1 2 3,,3 3 3,,,,,,0 x 0', 'correlation', /'x'/],
    ['antenna height in hi', 'gnss_baseline,G1,,G2,1 2 3,,3 3 3,1.5', 'hi', /mark to mark/],
    ['antenna height in ht', 'gnss_baseline,G1,,G2,1 2 3,,3 3 3,,1.6', 'ht', /mark to mark/],
    ['to blank', 'gnss_baseline,G1,,,1 2 3,,3 3 3', 'to', /blank/],
    ['to equals at', 'gnss_baseline,G1,,G1,1 2 3,,3 3 3', 'to', /same station/],
  ])('%s → line 2, column %s', (_what, row, column, message) => {
    const e = err1(row)
    expect(e).toEqual([expect.objectContaining({ line: 2, column, message: expect.stringMatching(message) })])
  })

  it('correlations each inside (−1, 1) but contradicting each other: refused in column correlation, as ml-matrix finds a negative eigenvalue', () => {
    const s = 0.003
    const [a, b, c] = [0.9, 0.9, -0.9]
    const C = new Matrix([[s * s, a * s * s, b * s * s], [a * s * s, s * s, c * s * s], [b * s * s, c * s * s, s * s]])
    expect(Math.min(...new EigenvalueDecomposition(C).realEigenvalues)).toBeLessThan(0)
    const e = err1('gnss_baseline,G1,,G2,1 2 3,,3 3 3,,,,,,0.9 0.9 -0.9')
    expect(e).toEqual([expect.objectContaining({ line: 2, column: 'correlation', message: expect.stringMatching(/not positive definite/) })])
  })

  it('strong but consistent correlations (ml-matrix: all eigenvalues positive) are accepted', () => {
    const s = [0.004, 0.003, 0.009]
    const [a, b, c] = [0.8, 0.7, 0.6]
    const C = new Matrix([[s[0]! ** 2, a * s[0]! * s[1]!, b * s[0]! * s[2]!], [a * s[0]! * s[1]!, s[1]! ** 2, c * s[1]! * s[2]!], [b * s[0]! * s[2]!, c * s[1]! * s[2]!, s[2]! ** 2]])
    expect(Math.min(...new EigenvalueDecomposition(C).realEigenvalues)).toBeGreaterThan(0)
    const r = ok(readObservationCsv(`${HEADER}\ngnss_baseline,G1,,G2,1 2 3,,4 3 9,,,,,,0.8 0.7 0.6\n`))
    expect(r.observations[0]!.vector!.correlation).toEqual([0.8, 0.7, 0.6])
  })

  it('reports every bad field of a row, and every bad row, each with its own line', () => {
    const e = errors([
      'gnss_baseline,G1,,G2,1 2,ft,,2.0',
      'slope_distance,G1,,G2,100.000,,,,,,,',
      'gnss_baseline,G2,,G3,1 2 3,,3 3 3,,,,,,0.1 0.1',
    ])
    expect(e.map((i) => `${i.line}:${i.column}`)).toEqual(['2:unit', '2:hi', '2:value', '2:sigma', '4:correlation'])
  })

  it('zero hi/ht are accepted (the mark itself); from, set and length are warned as not used', () => {
    const r = ok(readObservationCsv(`${HEADER}\ngnss_baseline,G1,X,G2,1 2 3,,3 3 3,0,0.000,S1,2.5\n`))
    expect(r.observations).toHaveLength(1)
    expect(r.warnings.map((w) => w.column).sort()).toEqual(['from', 'length', 'set'])
  })

  it('a correlation on another kind is warned as ignored, not silently dropped', () => {
    const r = ok(readObservationCsv(`${HEADER}\nslope_distance,G1,,G2,100.000,,3,,,,,,0.1 0.2 0.3\ncontrol,G1,,,1000 2000 50,,,,,,,,0.1 0.2 0.3\n`))
    expect(r.warnings).toEqual([
      expect.objectContaining({ line: 2, column: 'correlation', message: expect.stringMatching(/only used by gnss_baseline/) }),
      expect.objectContaining({ line: 3, column: 'correlation' }),
    ])
  })
})
