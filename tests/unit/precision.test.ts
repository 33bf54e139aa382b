// The one rule for precisions (shared/precision.ts). Foot definitions:
// international foot = 0.3048 m exactly, U.S. survey foot = 1200/3937 m
// (Federal Register 24 FR 5348, 1959; NIST Handbook 44, Appendix C).
import { describe, expect, it } from 'vitest'
import { formatPrecision, parseLength, parsePrecision, parsePrecisionMm, precisionInputText, precisionScale } from '../../shared/precision'

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

  describe('typed values back to metres (σ inputs)', () => {
    const metres = (text: string, scale = precisionScale('ft', 'hundredth_ft')) => {
      const r = parsePrecision(text, scale)
      if (!r || !r.ok) throw new Error(`not parsed: ${text}`)
      return r.metres
    }

    it('millimetres: 2.5 mm is 0.0025 m, comma or point', () => {
      const mm = precisionScale('m', 'mm')
      expect(metres('2.5', mm)).toBe(0.0025)
      expect(metres('2,5', mm)).toBe(0.0025)
      expect(metres('.3', mm)).toBe(0.0003)
      expect(metres('10000', mm)).toBe(10)
    })

    it('hundredths of an international foot: the double nearest the exact product (hand-computed)', () => {
      // 1.25 × 0.003048 m = 0.00381 m; 3 × 0.003048 = 0.009144; 0.7 × 0.003048 = 0.0021336
      expect(metres('1.25')).toBe(0.00381)
      expect(metres('3')).toBe(0.009144)
      expect(metres('0.7')).toBe(0.0021336)
      expect(metres('100')).toBe(0.3048)
    })

    it('hundredths of a US survey foot: 3937 hundredths = 39.37 US ft = 12 m exactly', () => {
      const us = precisionScale('usft', 'hundredth_ft')
      expect(metres('3937', us)).toBe(12)
      expect(metres('39.37', us)).toBe(0.12)
      // the international foot would give 39.37 × 0.003048 = 0.11999976 m
      expect(metres('39.37')).toBe(0.11999976)
    })

    it('what the input shows reads back as the same text', () => {
      const ft = precisionScale('ft', 'hundredth_ft')
      const us = precisionScale('usft', 'hundredth_ft')
      const mm = precisionScale('m', 'mm')
      for (const [text, scale] of [['1.25', ft], ['0.7', ft], ['3.3333', us], ['12', us], ['2.5', mm], ['0.001', mm]] as const)
        expect(precisionInputText(metres(text, scale), scale)).toBe(text)
      expect(precisionInputText(null, ft)).toBe('')
    })

    it('in millimetres for the run holds: mm stay as typed, hundredths convert with one rounding', () => {
      const mm = (text: string, scale: ReturnType<typeof precisionScale>) => {
        const r = parsePrecisionMm(text, scale)
        if (!r || !r.ok) throw new Error(`not parsed: ${text}`)
        return r.mm
      }
      expect(mm('4.1', precisionScale('m', 'mm'))).toBe(4.1)
      expect(mm('0.3', precisionScale('ft', 'mm'))).toBe(0.3)
      // 1.25 × 3.048 mm = 3.81 mm; 39.37 × 3.048 = 119.99976; 3937 hundredths of a US foot = 12 000 mm
      expect(mm('1.25', precisionScale('ft', 'hundredth_ft'))).toBe(3.81)
      expect(mm('39.37', precisionScale('ft', 'hundredth_ft'))).toBe(119.99976)
      expect(mm('3937', precisionScale('usft', 'hundredth_ft'))).toBe(12000)
      expect(parsePrecisionMm('', precisionScale('m', 'mm'))).toBeNull()
      expect(parsePrecisionMm('4..1', precisionScale('m', 'mm'))?.ok).toBe(false)
    })

    it('blank is no value; anything else that is not a plain decimal is refused, naming the unit', () => {
      const ft = precisionScale('ft', 'hundredth_ft')
      expect(parsePrecision('  ', ft)).toBeNull()
      for (const bad of ['1e3', 'abc', '1.2.3', '.', '0x10', 'Infinity', '1 2']) {
        const r = parsePrecision(bad, ft)
        expect(r?.ok, bad).toBe(false)
        if (r && !r.ok) expect(r.message).toContain('0.01 ft')
      }
    })
  })
})

describe('lengths typed in a project\'s own unit (project height, geoid separation)', () => {
  // 1 ft = 0.3048 m and 1 US ft = 1200/3937 m exactly (NIST Handbook 44, Appendix C)
  it('converts feet to metres with one rounding: the double nearest the exact product', () => {
    // 328.084 ft × 0.3048 = 100.0000032 m exactly in decimals; 328.084 * 0.3048 in doubles is 100.00000320000001
    expect(parseLength('328.084', 'ft')).toEqual({ ok: true, metres: 100.0000032 })
    expect(parseLength('0.1', 'ft')).toEqual({ ok: true, metres: 0.03048 })
    expect(parseLength('3937', 'usft')).toEqual({ ok: true, metres: 1200 })
    expect(parseLength('-12,5', 'm')).toEqual({ ok: true, metres: -12.5 })
    expect(parseLength('  ', 'ft')).toBeNull()
    expect(parseLength('1e3', 'ft')).toEqual({ ok: false, message: "'1e3' is not a number of ft" })
  })
})
