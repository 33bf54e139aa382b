// The one rule for precisions (shared/precision.ts). Foot definitions:
// international foot = 0.3048 m exactly, U.S. survey foot = 1200/3937 m
// (Federal Register 24 FR 5348, 1959; NIST Handbook 44, Appendix C).
import { describe, expect, it } from 'vitest'
import { formatPrecision, precisionScale } from '../../shared/precision'

describe('precision units', () => {
  it('metre projects show millimetres whatever the setting says', () => {
    for (const setting of ['mm', 'hundredth_ft'] as const) {
      const s = precisionScale('m', setting)
      expect(s.label).toBe('mm')
      expect(formatPrecision(0.01234, s)).toBe('12.3')
    }
  })

  it('a feet project set to mm shows millimetres', () => {
    const s = precisionScale('ft', 'mm')
    expect(s.label).toBe('mm')
    expect(formatPrecision(0.003048, s)).toBe('3.0')
  })

  it('hundredths of an international foot: 3.048 mm is exactly one hundredth', () => {
    const s = precisionScale('ft', 'hundredth_ft')
    expect(s.label).toBe('0.01 ft')
    expect(formatPrecision(0.003048, s)).toBe('1.00')
    expect(formatPrecision(0.3048, s)).toBe('100.00')
  })

  it('hundredths of a US survey foot differ from the international foot by 2 ppm', () => {
    const s = precisionScale('usft', 'hundredth_ft')
    expect(s.label).toBe('0.01 US ft')
    // 12/3937 m is one hundredth of a US survey foot
    expect(formatPrecision(12 / 3937, s, 6)).toBe('1.000000')
    // 1 m = 3937/12 hundredths = 328.0833… (the international foot gives 328.0840)
    expect(formatPrecision(1, s, 4)).toBe('328.0833')
    expect(formatPrecision(1, precisionScale('ft', 'hundredth_ft'), 4)).toBe('328.0840')
  })

  it('a missing value is a dash, not 0', () => {
    expect(formatPrecision(null, precisionScale('ft', 'hundredth_ft'))).toBe('—')
    expect(formatPrecision(Number.NaN, precisionScale('m', 'mm'))).toBe('—')
  })
})
