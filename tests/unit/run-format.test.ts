// Angles on the run pages: arcseconds for DMS projects, centesimal seconds (cc)
// for gon projects. Source: the gon is 1/400 of a full turn (ISO 80000-3) and a
// gon has 100 centesimal minutes of 100 centesimal seconds each; the degree is
// 1/360 of a full turn with 60′ of 60″ each. Hence 1 gon = 0.9° = 3240″ = 10 000 cc.
import { describe, expect, it } from 'vitest'
import { arcsecToCc, holdWords, smallAngle, smallAngleUnit } from '../../composables/useRunFormat'

describe('arcseconds to centesimal seconds', () => {
  it('one gon: 3240″ = 10 000 cc exactly', () => {
    expect(arcsecToCc(3240)).toBe(10_000)
  })

  it('a full turn: 1 296 000″ = 400 gon = 4 000 000 cc', () => {
    expect(arcsecToCc(360 * 3600)).toBe(4_000_000)
  })

  it('one centesimal second is 0.324″ (0.9° / 10 000 · 3600)', () => {
    expect(arcsecToCc(0.324)).toBeCloseTo(1, 12)
    // 1″ = 10 000 / 3240 cc ≈ 3.0864 cc: a cc is the smaller unit
    expect(arcsecToCc(1)).toBeCloseTo(10_000 / 3240, 12)
    expect(arcsecToCc(1)).toBeGreaterThan(3.08)
    expect(arcsecToCc(1)).toBeLessThan(3.09)
  })

  it('keeps the sign of a residual', () => {
    expect(arcsecToCc(-3240)).toBe(-10_000)
  })
})

describe('small angles in the project preference', () => {
  it('gon projects get cc, DMS projects keep ″', () => {
    expect(smallAngle(6.48, 'gon')).toBeCloseTo(20, 12)
    expect(smallAngleUnit('gon')).toBe('cc')
    expect(smallAngle(6.48, 'dms')).toBe(6.48)
    expect(smallAngleUnit('dms')).toBe('″')
  })
})

describe('how a station was held, in words (regression: a benchmark held only in height read "held fixed")', () => {
  const st = (fixed: boolean, east: boolean, height: boolean, kind: 'control' | 'new' = 'control') => ({ fixed, kind, controlled: { east, north: east, height } })
  it('names the held components', () => {
    expect(holdWords(st(true, false, true))).toBe('H held')
    expect(holdWords(st(true, true, false))).toBe('EN held')
    expect(holdWords(st(true, true, true))).toBe('held fixed (EN, H)')
    expect(holdWords(st(false, true, false))).toBe('weighted (EN)')
    expect(holdWords(st(false, false, false, 'new'))).toBe('new')
  })
})
