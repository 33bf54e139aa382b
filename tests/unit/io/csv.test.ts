// Tiepoint observation CSV reader (DESIGN.md section 6). Expected values come
// from the unit definitions (ft = 0.3048 m, usft = 1200/3937 m: NIST Handbook
// 44 App. C; gon = π/200 rad: ISO 80000-3) applied by hand to the fixture rows,
// and line numbers are counted by hand in the fixture text.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { readObservationCsv } from '../../../server/engine/io/csv'
import type { InstrumentProfile, ReadIssue, ReadResult } from '../../../server/engine/types'

const DEG = Math.PI / 180
const ARCSEC = DEG / 3600
const HEADER = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note'

function ok(r: ReadResult) {
  if (!r.ok) throw new Error('expected ok, got errors: ' + JSON.stringify(r.errors))
  return r
}
function errorsOf(r: ReadResult): ReadIssue[] {
  if (r.ok) throw new Error('expected errors, got ok')
  expect('observations' in r).toBe(false)
  return r.errors
}
function one(row: string) {
  const r = ok(readObservationCsv(`${HEADER}\n${row}\n`))
  expect(r.observations).toHaveLength(1)
  return r.observations[0]!
}
function errorOf(row: string): ReadIssue {
  const errs = errorsOf(readObservationCsv(`${HEADER}\n${row}\n`))
  expect(errs.length).toBeGreaterThanOrEqual(1)
  return errs[0]!
}

describe('fixture with every kind (tests/fixtures/io/every-kind.csv)', () => {
  const r = ok(readObservationCsv(readFileSync(new URL('../../fixtures/io/every-kind.csv', import.meta.url), 'utf8')))
  const byLine = new Map(r.observations.map((o) => [o.line, o]))

  it('reads three control rows at their file lines', () => {
    expect(r.controls.map((c) => c.line)).toEqual([4, 5, 6])
    expect(r.controls[0]).toEqual({
      line: 4, station: 'P1', east: 1000, north: 5000, height: 50, sdEast: null, sdNorth: null, sdHeight: null,
    })
    expect(r.controls[1]).toMatchObject({ station: 'P2', east: 1200, north: 5100, height: null, sdEast: 0.005, sdNorth: 0.005 })
    expect(r.controls[2]).toMatchObject({ station: 'BM1', east: null, north: null, height: 61.234, sdHeight: null })
  })
  it('keeps line numbers true across comment and blank lines', () => {
    expect([...byLine.keys()]).toEqual([8, 9, 10, 11, 12, 13, 14, 15, 16, 17])
  })
  it('direction in dms with set, hi and ht in metres', () => {
    expect(byLine.get(8)).toMatchObject({ kind: 'direction', at: 'P1', to: 'P2', value: 0, set: 'r1', hi: 1.5, ht: 1.6, sigma: null, from: null })
  })
  it('direction in decimal degrees, sigma in arcseconds', () => {
    const o = byLine.get(9)!
    expect(o.value).toBeCloseTo(45.5 * DEG, 15)
    expect(o.sigma).toBeCloseTo(3 * ARCSEC, 18)
  })
  it('angle in gon with backsight', () => {
    expect(byLine.get(10)).toMatchObject({ kind: 'angle', at: 'P1', from: 'P2', to: 'P3' })
    expect(byLine.get(10)!.value).toBeCloseTo((50.5 * Math.PI) / 200, 15)
  })
  it('zenith in radians', () => {
    expect(byLine.get(11)).toMatchObject({ kind: 'zenith', value: Math.PI / 2, hi: 1.5, ht: 1.7 })
    expect(byLine.get(11)!.sigma).toBeCloseTo(5 * ARCSEC, 18)
  })
  it('azimuth with the blank unit read as dms', () => {
    expect(byLine.get(12)!.value).toBeCloseTo((63 + 26 / 60 + 5.8 / 3600) * DEG, 14)
  })
  it('slope distance with the blank unit read as metres', () => {
    expect(byLine.get(13)).toMatchObject({ kind: 'slope_distance', value: 223.61, hi: 1.5, ht: 1.7 })
  })
  it('horizontal distance in international feet, sigma in mm', () => {
    expect(byLine.get(14)!.value).toBeCloseTo(30.48, 12)
    expect(byLine.get(14)!.sigma).toBeCloseTo(0.002, 15)
  })
  it('horizontal distance in US survey feet', () => {
    expect(byLine.get(15)!.value).toBeCloseTo((100 * 1200) / 3937, 12)
  })
  it('height differences with length in km and with a quoted note holding a comma', () => {
    expect(byLine.get(16)).toMatchObject({ kind: 'height_difference', value: 11.2345, lengthKm: 0.42, sigma: null })
    expect(byLine.get(17)).toMatchObject({ value: -3.1, sigma: 0.0015, note: 'note, with comma' })
  })
})

describe('file conventions', () => {
  const body = 'direction,A,,B,10 00 00\ndirection,A,,C,20 00 00\n'
  it('strips a UTF-8 byte-order mark', () => {
    const r = ok(readObservationCsv(`\uFEFF${HEADER}\n${body}`))
    expect(r.observations).toHaveLength(2)
    expect(r.warnings).toEqual([])
  })
  it('reads CRLF and mixed line endings with the same line numbers', () => {
    const lf = ok(readObservationCsv(`${HEADER}\n# c\n${body}`))
    const crlf = ok(readObservationCsv(`${HEADER}\r\n# c\r\n${body.replace(/\n/g, '\r\n')}`))
    expect(crlf.observations).toEqual(lf.observations)
    expect(crlf.observations.map((o) => o.line)).toEqual([3, 4])
  })
  it('reads header names case-insensitively and in any order', () => {
    const r = ok(readObservationCsv('VALUE,To,AT,Kind\n10 00 00,B,A,DIRECTION\n'))
    expect(r.observations[0]).toMatchObject({ kind: 'direction', at: 'A', to: 'B' })
  })
  it('reads quoted fields with commas, doubled quotes and newlines; the next row keeps its true line', () => {
    const text = `${HEADER}\ndirection,A,,B,10 00 00,,,,,,,"two\nlines, ""quoted"""\ndirection,A,,C,20 00 00\n`
    const r = ok(readObservationCsv(text))
    expect(r.observations[0]!.note).toBe('two\nlines, "quoted"')
    expect(r.observations.map((o) => o.line)).toEqual([2, 4])
  })
  it('a "#" at the start of a continuation line inside quotes is text, not a comment', () => {
    const r = ok(readObservationCsv('kind,at,to,value,note\ndirection,A,B,1 00 00,"first\n# second"\ndirection,A,C,2 00 00\n'))
    expect(r.observations.map((o) => [o.line, o.note])).toEqual([[2, 'first\n# second'], [4, '']])
  })
  it('skips comment lines, blank lines and all-blank rows, counting them', () => {
    const text = `# top\n\n${HEADER}\n# mid, "with quote\n   \n,,,,\ndirection,A,,B,1 00 00\n  # indented comment\n`
    const r = ok(readObservationCsv(text))
    expect(r.observations.map((o) => o.line)).toEqual([7])
  })
  it('warns about unknown columns and keeps reading', () => {
    const r = ok(readObservationCsv('kind,at,to,value,colour\ndirection,A,B,1 00 00,red\n'))
    expect(r.warnings).toEqual([{ line: 1, column: 'colour', message: "unknown column 'colour' is ignored" }])
  })
  it.each(['kind', 'at', 'to', 'value'])('a header without %s is an error on the header line naming it', (col) => {
    const cols = ['kind', 'at', 'to', 'value'].filter((c) => c !== col)
    const errs = errorsOf(readObservationCsv(`${cols.join(',')}\n`))
    expect(errs).toEqual([expect.objectContaining({ line: 1, column: col })])
    expect(errs[0]!.message).toContain(`'${col}'`)
  })
  it('a repeated header column is an error', () => {
    expect(errorsOf(readObservationCsv('kind,at,to,value,AT\n'))[0]).toMatchObject({ line: 1, column: 'at' })
  })
  it('an empty file or one with only comments is an error', () => {
    expect(errorsOf(readObservationCsv(''))[0]).toMatchObject({ line: 1, column: 'header' })
    expect(errorsOf(readObservationCsv('# nothing\n\n'))[0]).toMatchObject({ line: 1, column: 'header' })
  })
  it('a header alone is ok with a warning', () => {
    const r = ok(readObservationCsv(`${HEADER}\n`))
    expect(r.warnings[0]!.message).toMatch(/no control or observation rows/)
  })
  it('an unclosed quote is an error on the line where the field starts', () => {
    const errs = errorsOf(readObservationCsv(`${HEADER}\ndirection,A,,B,1 00 00\ndirection,A,,B,"1 00 00\n`))
    expect(errs).toEqual([expect.objectContaining({ line: 3, column: 'row' })])
  })
  it('a row with more fields than the header is an error; trailing empty fields are not', () => {
    expect(errorOf('direction,A,,B,1 00 00,,,,,,,note,extra')).toMatchObject({ line: 2, column: 'row' })
    expect(one('direction,A,,B,1 00 00,,,,,,,note,,').note).toBe('note')
  })
})

describe('all errors are reported, nothing is returned', () => {
  it('lists one error for every bad line, in order, with the documented message form', () => {
    const text = [
      HEADER, // 1
      'direction,A,,B,12x.5', // 2 bad
      'direction,A,,C,1 00 00', // 3 good
      '# comment', // 4
      'slope_distance,A,,B,-5', // 5 bad
      'wobble,A,,B,1', // 6 bad
      'zenith,A,,B,1 00 00', // 7 good
      'height_difference,A,,B,1.2', // 8 bad: no sigma, no length
    ].join('\n')
    const errs = errorsOf(readObservationCsv(text))
    expect(errs.map((e) => [e.line, e.column])).toEqual([
      [2, 'value'],
      [5, 'value'],
      [6, 'kind'],
      [8, 'length'],
    ])
    expect(errs[0]!.message).toBe("'12x.5' is not an angle in degrees, minutes and seconds")
  })
  it("reports a length that is not a number as \"'12x.5' is not a number\"", () => {
    expect(errorOf('slope_distance,A,,B,12x.5')).toEqual({ line: 2, column: 'value', message: "'12x.5' is not a number" })
  })
  it('reports several problems of one row separately', () => {
    const errs = errorsOf(readObservationCsv(`${HEADER}\nslope_distance,,,,abc,,-1\n`))
    expect(errs.map((e) => e.column)).toEqual(['at', 'to', 'value', 'sigma'])
  })
})

describe('validation of each field', () => {
  it.each([
    ['missing at', 'direction,,,B,1 00 00', 'at'],
    ['missing to', 'direction,A,,,1 00 00', 'to'],
    ['same station at and to', 'slope_distance,A,,A,10', 'to'],
    ['angle without backsight', 'angle,A,,B,10 00 00', 'from'],
    ['angle with backsight = station', 'angle,A,A,B,10 00 00', 'from'],
    ['angle with backsight = foresight', 'angle,A,B,B,10 00 00', 'from'],
    ['blank value', 'direction,A,,B,', 'value'],
    ['NaN', 'slope_distance,A,,B,NaN', 'value'],
    ['Infinity', 'slope_distance,A,,B,Infinity', 'value'],
    ['overflow', 'slope_distance,A,,B,1e999', 'value'],
    ['huge distance', 'slope_distance,A,,B,5e9', 'value'],
    ['zero distance', 'horizontal_distance,A,,B,0', 'value'],
    ['negative distance', 'horizontal_distance,A,,B,-0.001', 'value'],
    ['huge height difference', 'height_difference,A,,B,1e6,,2', 'value'],
    ['zenith of a full circle', 'zenith,A,,B,400,gon', 'value'],
    ['negative zenith', 'zenith,A,,B,-1,deg', 'value'],
    ['direction beyond a circle', 'direction,A,,B,7,rad', 'value'],
    ['minutes of 60', 'direction,A,,B,10 60 00', 'value'],
    ['seconds of 60', 'direction,A,,B,10 00 60', 'value'],
    ['ambiguous dms', 'direction,A,,B,10.3000', 'value'],
    ['a length unit on an angle', 'direction,A,,B,10,m', 'unit'],
    ['an angle unit on a length', 'slope_distance,A,,B,10,dms', 'unit'],
    ['an unknown unit', 'slope_distance,A,,B,10,furlong', 'unit'],
    ['zero sigma', 'slope_distance,A,,B,10,,0', 'sigma'],
    ['negative sigma', 'direction,A,,B,1 00 00,,-3', 'sigma'],
    ['non-numeric sigma', 'direction,A,,B,1 00 00,,abc', 'sigma'],
    ['huge sigma', 'direction,A,,B,1 00 00,,1e9', 'sigma'],
    ['bad hi', 'zenith,A,,B,90 00 00,,,x', 'hi'],
    ['huge ht', 'zenith,A,,B,90 00 00,,,1.5,5000', 'ht'],
    ['levelling with neither sigma nor length', 'height_difference,A,,B,0.5', 'length'],
    ['zero levelling length', 'height_difference,A,,B,0.5,,,,,,0', 'length'],
    ['unknown kind', 'traverse,A,,B,1', 'kind'],
    ['blank kind', ',A,,B,1', 'kind'],
    ['station name too long', `direction,${'x'.repeat(101)},,B,1 00 00`, 'at'],
  ])('%s → error in column %s', (_what, row, column) => {
    const e = errorOf(row)
    expect(e.line).toBe(2)
    expect(e.column).toBe(column)
    expect(e.message.length).toBeGreaterThan(5)
  })
  it('kinds are read case- and separator-insensitively', () => {
    expect(one('Slope-Distance,A,,B,10').kind).toBe('slope_distance')
    expect(one('HORIZONTAL DISTANCE,A,,B,10').kind).toBe('horizontal_distance')
  })
  it('hi/ht are in the file\'s height unit on every row, whatever the row\'s own unit (m by default)', () => {
    expect([one('slope_distance,A,,B,100,ft,,5,6').hi, one('slope_distance,A,,B,100,ft,,5,6').ht]).toEqual([5, 6])
    const o = one('zenith,A,,B,100,gon,,1.5,1.6')
    expect([o.hi, o.ht]).toEqual([1.5, 1.6])
  })
  it('regression: in a feet project a zenith row and its slope distance read hi/ht alike (angle rows used to take metres; international foot 0.3048 m)', () => {
    const text = `${HEADER}\nslope_distance,A,,B,100,ft,,5,6\nzenith,A,,B,90,deg,,5,6\n`
    const r = readObservationCsv(text, { heightUnit: 'ft' })
    if (!r.ok) throw new Error(JSON.stringify(r.errors))
    for (const o of r.observations) {
      expect(o.hi).toBeCloseTo(5 * 0.3048, 12)
      expect(o.ht).toBeCloseTo(6 * 0.3048, 12)
    }
  })
  it('sigma of a length is millimetres even when the value is in feet', () => {
    expect(one('slope_distance,A,,B,100,usft,3').sigma).toBeCloseTo(0.003, 15)
  })
  it('levelling with sigma but no length is fine', () => {
    expect(one('height_difference,A,,B,0.5,,2')).toMatchObject({ sigma: 0.002, lengthKm: null })
  })
  it('a blank set on a direction means one set per station (null)', () => {
    expect(one('direction,A,,B,1 00 00').set).toBeNull()
  })
  it('columns that do not apply to a kind are warned about and ignored', () => {
    const r = ok(readObservationCsv(`${HEADER}\nslope_distance,A,X,B,10,,,,,s9,1.2\n`))
    expect(r.observations[0]).toMatchObject({ from: null, set: null, lengthKm: null })
    expect(r.warnings.map((w) => w.column)).toEqual(['from', 'length', 'set'])
  })
})

describe('control rows', () => {
  it('E N H weighted with three sigmas in mm', () => {
    const r = ok(readObservationCsv(`${HEADER}\ncontrol,K,,,"1 2 3",,"4 5 6"\n`))
    expect(r.controls[0]).toMatchObject({ east: 1, north: 2, height: 3, sdEast: 0.004, sdNorth: 0.005, sdHeight: 0.006 })
  })
  it('E N H with two sigmas weights the position and holds the height', () => {
    const r = ok(readObservationCsv(`${HEADER}\ncontrol,K,,,1 2 3,,4 5\n`))
    expect(r.controls[0]).toMatchObject({ sdEast: 0.004, sdNorth: 0.005, sdHeight: null })
  })
  it('a benchmark with a height sigma', () => {
    const r = ok(readObservationCsv(`${HEADER}\ncontrol,BM,,,12.5,,3\n`))
    expect(r.controls[0]).toMatchObject({ east: null, north: null, height: 12.5, sdHeight: 0.003 })
  })
  it('control in US survey feet', () => {
    const r = ok(readObservationCsv(`${HEADER}\ncontrol,K,,,3937 7874,usft\n`))
    expect(r.controls[0]!.east).toBeCloseTo(1200, 9)
    expect(r.controls[0]!.north).toBeCloseTo(2400, 9)
  })
  it('E N control and a separate H benchmark for one station are both kept', () => {
    const r = ok(readObservationCsv(`${HEADER}\ncontrol,K,,,1 2\ncontrol,K,,,3\n`))
    expect(r.controls).toHaveLength(2)
  })
  it.each([
    ['four numbers', 'control,K,,,1 2 3 4', 'value'],
    ['a bad number', 'control,K,,,1 2x', 'value'],
    ['blank value', 'control,K,,,', 'value'],
    ['an angle unit', 'control,K,,,1 2,dms', 'unit'],
    ['wrong sigma count', 'control,K,,,1 2,,3', 'sigma'],
    ['zero sigma', 'control,K,,,1 2,,0 0', 'sigma'],
    ['huge coordinate', 'control,K,,,1e12 2', 'value'],
    ['missing station', 'control,,,,1 2', 'at'],
  ])('%s → error in column %s', (_what, row, column) => {
    expect(errorOf(row)).toMatchObject({ line: 2, column })
  })
  it('the same component twice is an error naming the first line', () => {
    const errs = errorsOf(readObservationCsv(`${HEADER}\ncontrol,K,,,1 2\ncontrol,K,,,5 6 7\n`))
    expect(errs[0]).toMatchObject({ line: 3, column: 'at' })
    expect(errs[0]!.message).toContain('line 2')
  })
})

describe('instrument profile', () => {
  const full: InstrumentProfile = {
    distanceMm: 2, distancePpm: 2, directionArcsec: 3, zenithArcsec: 5,
    centeringInstrumentMm: 1, centeringTargetMm: 1, levellingMmPerSqrtKm: 2,
  }
  it('rows without sigma are fine when the profile weights them; sigma stays null for the engine', () => {
    const r = ok(readObservationCsv(`${HEADER}\ndirection,A,,B,1 00 00\n`, { profile: full }))
    expect(r.observations[0]!.sigma).toBeNull()
  })
  it.each([
    ['directionArcsec', 'direction,A,,B,1 00 00'],
    ['zenithArcsec', 'zenith,A,,B,90 00 00'],
    ['levellingMmPerSqrtKm', 'height_difference,A,,B,1,,,,,,1'],
  ] as const)('a profile without %s cannot weight a row without sigma', (field, row) => {
    const errs = errorsOf(readObservationCsv(`${HEADER}\n${row}\n`, { profile: { ...full, [field]: 0 } }))
    expect(errs[0]).toMatchObject({ line: 2, column: 'sigma' })
  })
  it('a profile without any distance σ cannot weight a distance without sigma', () => {
    const p = { ...full, distanceMm: 0, distancePpm: 0 }
    expect(errorsOf(readObservationCsv(`${HEADER}\nslope_distance,A,,B,10\n`, { profile: p }))[0]!.column).toBe('sigma')
    expect(readObservationCsv(`${HEADER}\nslope_distance,A,,B,10,,2\n`, { profile: p }).ok).toBe(true)
  })
})

describe('the unit as written is kept beside the SI value', () => {
  it('normalises the spellings people type to m, ft, usft, deg, dms, gon, rad', () => {
    expect(one('slope_distance,A,,B,100,Feet,,,,,,').unit).toBe('ft')
    expect(one('horizontal_distance,A,,B,100,US survey foot,,,,,,').unit).toBe('usft')
    expect(one('height_difference,A,,B,1.2,Metres,3,,,,,').unit).toBe('m')
    expect(one('direction,A,,B,12.5,Degrees,,,,,,').unit).toBe('deg')
    expect(one('zenith,A,,B,100,grads,,,,,,').unit).toBe('gon')
    expect(one('azimuth,A,,B,1.5,Radian,,,,,,').unit).toBe('rad')
    expect(one('angle,A,C,B,12 30 00,DMS,,,,,,').unit).toBe('dms')
  })
  it('a blank unit cell records the default the value was read in: m for lengths, dms for angles', () => {
    expect(one('slope_distance,A,,B,100,,,,,,,').unit).toBe('m')
    expect(one('direction,A,,B,12 30 00,,,,,,,').unit).toBe('dms')
  })
  it('the value itself is still metres (ft = 0.3048 m, NIST Handbook 44 App. C)', () => {
    const o = one('slope_distance,A,,B,100,ft,,,,,,')
    expect(o.value).toBeCloseTo(30.48, 12)
    expect(o.unit).toBe('ft')
  })
})
