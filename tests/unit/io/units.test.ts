// Unit parsing and formatting, checked against the definitions of the units:
// international foot = 0.3048 m and U.S. survey foot = 1200/3937 m (Federal
// Register 24 FR 5348, 1959; NIST Handbook 44, Appendix C); 1 gon = π/200 rad
// (ISO 80000-3); 1° = 60′ = 3600″.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import {
  METRES_PER,
  angleUnitOf,
  formatDms,
  formatGon,
  formatLength,
  lengthUnitOf,
  parseAngle,
  parseDms,
  parseLength,
  parseNumber,
  parsePackedDms,
} from '../../../server/engine/io/units'

const DEG = Math.PI / 180

function value(p: { ok: true; value: number } | { ok: false; message: string }): number {
  if (!p.ok) throw new Error(`expected a value, got: ${p.message}`)
  return p.value
}

describe('lengths (NIST Handbook 44 App. C; 24 FR 5348, 1959)', () => {
  it('international foot is 0.3048 m exactly', () => {
    expect(value(parseLength('1', 'ft'))).toBe(0.3048)
    expect(value(parseLength('10000', 'ft'))).toBeCloseTo(3048, 9)
  })
  it('US survey foot is 1200/3937 m: 3937 usft = 1200 m', () => {
    expect(METRES_PER.usft).toBe(1200 / 3937)
    expect(value(parseLength('3937', 'usft'))).toBeCloseTo(1200, 9)
  })
  it('the two feet differ by 2 ppm (0.3048006096 vs 0.3048)', () => {
    expect(METRES_PER.usft / METRES_PER.ft - 1).toBeCloseTo(2e-6, 8)
  })
  it('metres pass through', () => {
    expect(value(parseLength('-12.345', 'm'))).toBe(-12.345)
  })
  it('unit names are read case-insensitively', () => {
    expect(lengthUnitOf(' FT ')).toBe('ft')
    expect(lengthUnitOf('USft')).toBe('usft')
    expect(lengthUnitOf('Meters')).toBe('m')
    expect(lengthUnitOf('yd')).toBeNull()
    expect(angleUnitOf('GON')).toBe('gon')
    expect(angleUnitOf('DMS')).toBe('dms')
    expect(angleUnitOf('mil')).toBeNull()
  })
})

describe('numbers', () => {
  it.each(['', '  ', 'NaN', 'Infinity', '-Infinity', '0x10', '12x.5', '1,5', '1e', '--1', '.'])('refuses %j', (t) => {
    expect(parseNumber(t).ok).toBe(false)
  })
  it('refuses overflow to Infinity', () => {
    const p = parseNumber('1e400')
    expect(p.ok).toBe(false)
    if (!p.ok) expect(p.message).toMatch(/too large/)
  })
  it('names the bad text in the message', () => {
    const p = parseNumber('12x.5')
    expect(p.ok ? '' : p.message).toBe("'12x.5' is not a number")
  })
  it.each([
    ['1', 1],
    ['+2.5', 2.5],
    ['-.5', -0.5],
    ['1e3', 1000],
    ['7.', 7],
  ])('reads %j', (t, v) => {
    expect(value(parseNumber(t))).toBe(v)
  })
})

describe('angles', () => {
  it('degrees: 180 deg = π rad', () => {
    expect(value(parseAngle('180', 'deg'))).toBeCloseTo(Math.PI, 15)
  })
  it('gon: 200 gon = π rad, 1 gon = π/200 (ISO 80000-3)', () => {
    expect(value(parseAngle('200', 'gon'))).toBeCloseTo(Math.PI, 15)
    expect(value(parseAngle('1', 'gon'))).toBe(Math.PI / 200)
  })
  it('radians pass through', () => {
    expect(value(parseAngle('1.25', 'rad'))).toBe(1.25)
  })
  const expected = (123 + 45 / 60 + 6.7 / 3600) * DEG
  it.each([`123°45'06.7"`, '123 45 06.7', '123-45-06.7', '123° 45′ 06.7″', "123°45'06.7''", '  123   45  6.7 '])(
    'dms spelling %j = 123°45′06.7″',
    (t) => {
      expect(value(parseAngle(t, 'dms'))).toBeCloseTo(expected, 14)
    },
  )
  it('dms with fewer parts: degrees only, degrees and minutes', () => {
    expect(value(parseDms('90'))).toBeCloseTo(Math.PI / 2, 15)
    expect(value(parseDms('12 30'))).toBeCloseTo(12.5 * DEG, 15)
    expect(value(parseDms(`12°30'`))).toBeCloseTo(12.5 * DEG, 15)
  })
  it('a sign applies to the whole dms angle', () => {
    expect(value(parseDms('-0 30 00'))).toBeCloseTo(-0.5 * DEG, 15)
    expect(value(parseDms('-12-30-00'))).toBeCloseTo(-12.5 * DEG, 15)
  })
  it.each([
    ['1 60 00', /minutes must be below 60/],
    ['1 00 60', /seconds must be below 60/],
    ['1 59 60.0', /seconds must be below 60/],
    ['123.4506', /ambiguous/],
    ['1.5 30', /only the last part/],
    ['1 2 3 4', /not an angle/],
    ['12x', /not an angle/],
    [`12"30'`, /not an angle/],
    ['', /blank/],
  ])('refuses dms %j', (t, re) => {
    const p = parseDms(t)
    expect(p.ok).toBe(false)
    if (!p.ok) expect(p.message).toMatch(re)
  })
  it('packed dd.mmss (LandXML "decimal dd.mm.ss"): 123.4506 = 123°45′06″', () => {
    expect(value(parsePackedDms('123.4506'))).toBeCloseTo((123 + 45 / 60 + 6 / 3600) * DEG, 14)
    expect(value(parsePackedDms('0.3000'))).toBeCloseTo(0.5 * DEG, 15)
    expect(value(parsePackedDms('10.000150'))).toBeCloseTo((10 + 1.5 / 3600) * DEG, 14)
    expect(parsePackedDms('1.6000').ok).toBe(false)
    expect(parsePackedDms('1.0060').ok).toBe(false)
  })
})

describe('formatting', () => {
  it('formats DMS with zero padding', () => {
    expect(formatDms(Math.PI, 1)).toBe(`180°00'00.0"`)
    expect(formatDms((123 + 45 / 60 + 6.7 / 3600) * DEG, 1)).toBe(`123°45'06.7"`)
    expect(formatDms((5 + 1 / 60 + 2 / 3600) * DEG, 0)).toBe(`5°01'02"`)
    expect(formatDms(-0.5 * DEG, 2)).toBe(`-0°30'00.00"`)
  })
  it('rounding carries into minutes and degrees', () => {
    expect(formatDms((359 + 59 / 60 + 59.96 / 3600) * DEG, 1)).toBe(`360°00'00.0"`)
    expect(formatDms((10 + 29 / 60 + 59.99 / 3600) * DEG, 1)).toBe(`10°30'00.0"`)
  })
  it('a tiny negative that rounds to zero has no sign', () => {
    expect(formatDms(-1e-12, 1)).toBe(`0°00'00.0"`)
  })
  it('gon: a right angle is 100 gon', () => {
    expect(formatGon(Math.PI / 2, 4)).toBe('100.0000')
  })
  it('lengths in feet by definition', () => {
    expect(formatLength(0.3048, 'ft', 3)).toBe('1.000')
    expect(formatLength(1200, 'usft', 3)).toBe('3937.000')
    expect(formatLength(1.23456, 'm', 2)).toBe('1.23')
  })
  it('property: formatDms then parseDms returns the angle within half the last decimal', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 2 * Math.PI, noNaN: true }), (rad) => {
        const back = value(parseDms(formatDms(rad, 4)))
        expect(Math.abs(back - rad)).toBeLessThanOrEqual(0.00005 * (Math.PI / 648000) * 1.0001)
      }),
      { numRuns: 500 },
    )
  })
})
