// Property-based fuzzing of both readers (property: bad input never crashes
// and always comes back as issues that name a line ≥ 1 and a column). Inputs
// are random bytes, random text, truncated valid files and rows assembled
// from wrong units, unknown kinds and NaN/Infinity/huge values.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { readObservationCsv } from '../../../server/engine/io/csv'
import { readLandXml } from '../../../server/engine/io/landxml'
import type { ReadResult } from '../../../server/engine/types'

const fixture = (name: string) => readFileSync(new URL(`../../fixtures/io/${name}`, import.meta.url), 'utf8')
const validCsv = fixture('every-kind.csv')
const validXml = fixture('landxml-metric.xml')

/** The contract every result must keep, whatever the input. */
function checkContract(text: string, r: ReadResult) {
  const lines = text.split(/\r\n|\r|\n/).length
  const issues = r.ok ? r.warnings : [...r.errors, ...r.warnings]
  for (const i of issues) {
    expect(Number.isInteger(i.line)).toBe(true)
    expect(i.line).toBeGreaterThanOrEqual(1)
    expect(i.line).toBeLessThanOrEqual(lines)
    expect(typeof i.column).toBe('string')
    expect(i.column.length).toBeGreaterThan(0)
    expect(i.message.length).toBeGreaterThan(0)
  }
  if (r.ok) {
    for (const o of r.observations) {
      expect(Number.isFinite(o.value)).toBe(true)
      expect(o.line).toBeGreaterThanOrEqual(1)
      expect(o.line).toBeLessThanOrEqual(lines)
      if (o.sigma !== null) expect(o.sigma).toBeGreaterThan(0)
    }
    for (const c of r.controls) {
      for (const v of [c.east, c.north, c.height]) if (v !== null) expect(Number.isFinite(v)).toBe(true)
    }
  } else {
    expect(r.errors.length).toBeGreaterThan(0)
    expect('observations' in r).toBe(false)
  }
}

const bytesAsText = fc.uint8Array({ maxLength: 400 }).map((b) => Buffer.from(b).toString('latin1'))
const anyText = fc.oneof(fc.string({ maxLength: 300 }), fc.string({ unit: 'binary', maxLength: 300 }), bytesAsText)

const token = fc.oneof(
  fc.constantFrom(
    'direction', 'angle', 'zenith', 'slope_distance', 'horizontal_distance', 'azimuth', 'height_difference', 'control',
    'wobble', '', 'A', 'B', 'NaN', 'Infinity', '-Infinity', '1e999', '-1e308', '1e308', '0', '-0', '-5', '360', '400',
    '10 60 00', '1 00 60', `123°45'06.7"`, '123-45-06.7', '1 2 3', '1 2', 'm', 'ft', 'usft', 'deg', 'dms', 'gon', 'rad',
    'furlong', '"', '""', '"a,b"', '#', ' ', '\t', '\u00a0', '\uFEFF',
  ),
  fc.double().map(String),
  fc.string({ maxLength: 8 }),
)
const row = fc.array(token, { minLength: 0, maxLength: 14 }).map((t) => t.join(','))
const header = fc.constantFrom(
  'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note',
  'KIND,AT,TO,VALUE,UNIT,SIGMA',
  'kind,at,value',
  'to,value,at,kind,length',
  '',
)
const eol = fc.constantFrom('\n', '\r\n', '\r')
const assembledCsv = fc.tuple(header, fc.array(row, { maxLength: 20 }), eol).map(([h, rows, nl]) => [h, ...rows].join(nl))

describe('CSV reader never throws and always names line and column', () => {
  it('random bytes and text', () => {
    fc.assert(fc.property(anyText, (t) => checkContract(t, readObservationCsv(t))), { numRuns: 400 })
  })
  it('rows assembled from bad kinds, units and values', () => {
    fc.assert(fc.property(assembledCsv, (t) => checkContract(t, readObservationCsv(t))), { numRuns: 600 })
  })
  it('a valid file truncated or cut at any point', () => {
    fc.assert(
      fc.property(fc.nat(validCsv.length), fc.nat(validCsv.length), (a, b) => {
        const t = validCsv.slice(0, a) + validCsv.slice(Math.max(a, b))
        checkContract(t, readObservationCsv(t))
      }),
      { numRuns: 400 },
    )
  })
  it('a valid file with one character replaced', () => {
    fc.assert(
      fc.property(fc.nat(validCsv.length - 1), fc.string({ minLength: 1, maxLength: 3 }), (i, s) => {
        const t = validCsv.slice(0, i) + s + validCsv.slice(i + 1)
        checkContract(t, readObservationCsv(t))
      }),
      { numRuns: 400 },
    )
  })
  it('non-string input is refused without throwing', () => {
    for (const v of [undefined, null, 42, {}]) {
      const r = readObservationCsv(v as unknown as string)
      expect(r.ok).toBe(false)
    }
  })
})

const attrValue = fc.oneof(
  fc.constantFrom('NaN', 'Infinity', '1e999', '-1', '400', '', 'abc', '12x.5', '0', '359.9999', 'meter', 'foot', 'radians', 'grads'),
  fc.double().map(String),
)
const attrName = fc.constantFrom('horizAngle', 'zenithAngle', 'slopeDistance', 'horizDistance', 'targetHeight', 'azimuth', 'setupID', 'linearUnit', 'angularUnit', 'instrumentHeight', 'pntRef', 'name', 'pntSurv')

describe('LandXML reader never throws and always names line and column', () => {
  it('random bytes and text', () => {
    fc.assert(fc.property(anyText, (t) => checkContract(t, readLandXml(t))), { numRuns: 400 })
  })
  it('random text wrapped in a LandXML root', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 200 }), (s) => {
        const t = `<LandXML><Units><Metric linearUnit="meter" angularUnit="radians"/></Units>${s}</LandXML>`
        checkContract(t, readLandXml(t))
      }),
      { numRuns: 300 },
    )
  })
  it('a valid file truncated at any point', () => {
    fc.assert(
      fc.property(fc.nat(validXml.length), (a) => {
        const t = validXml.slice(0, a)
        checkContract(t, readLandXml(t))
      }),
      { numRuns: 300 },
    )
  })
  it('attribute values replaced by bad numbers, units and names', () => {
    fc.assert(
      fc.property(attrName, attrValue, fc.nat(5), (name, v, nth) => {
        let k = -1
        const t = validXml.replace(new RegExp(`${name}="[^"]*"`, 'g'), (m) => (++k === nth ? `${name}="${v}"` : m))
        checkContract(t, readLandXml(t))
      }),
      { numRuns: 400 },
    )
  })
  it('deep nesting and entity tricks are refused cleanly', () => {
    const deep = '<a>'.repeat(5000) + '</a>'.repeat(5000)
    checkContract(deep, readLandXml(deep))
    const ent = '<?xml version="1.0"?><!DOCTYPE l [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;"><!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;">]><LandXML>&c;</LandXML>'
    checkContract(ent, readLandXml(ent))
  })
})
