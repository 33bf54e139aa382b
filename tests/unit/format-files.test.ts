// The downloadable template and example file (public/formats) must be what the
// reader accepts: a template that only holds the header, and an example that
// reads without a single error.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { readObservationCsv } from '../../server/engine/io/csv'
import { readLandXml } from '../../server/engine/io/landxml'

describe('format page downloads', () => {
  it('the template holds every column the reader knows, in its header row', () => {
    const text = readFileSync('public/formats/tiepoint-template.csv', 'utf8')
    const header = text.split('\n').find((l) => l && !l.startsWith('#'))!
    expect(header.split(',')).toEqual(['kind', 'at', 'from', 'to', 'value', 'unit', 'sigma', 'hi', 'ht', 'set', 'length', 'note', 'correlation'])
    const read = readObservationCsv(text)
    expect(read.ok ? read.observations.length : read.errors).toBe(0)
  })

  it('the example file reads without errors: every kind the format page shows', () => {
    const read = readObservationCsv(readFileSync('public/formats/tiepoint-example.csv', 'utf8'))
    if (!read.ok) throw new Error(read.errors.map((e) => `line ${e.line}, ${e.column}: ${e.message}`).join('\n'))
    expect(read.controls.map((c) => c.station).sort()).toEqual(['A1', 'A2'])
    expect(new Set(read.observations.map((o) => o.kind))).toEqual(new Set(['direction', 'horizontal_distance', 'angle', 'zenith', 'height_difference']))
    expect(read.warnings).toEqual([])
  })

  it('the GNSS example reads without errors: a held pillar and correlated vectors, in metres', () => {
    const read = readObservationCsv(readFileSync('public/formats/tiepoint-example-gnss.csv', 'utf8'))
    if (!read.ok) throw new Error(read.errors.map((e) => `line ${e.line}, ${e.column}: ${e.message}`).join('\n'))
    expect(read.controls.map((c) => c.station)).toEqual(['W01'])
    expect(read.observations.map((o) => o.kind)).toEqual(['gnss_baseline', 'gnss_baseline', 'gnss_baseline', 'gnss_baseline'])
    for (const o of read.observations) expect(o.vector!.correlation).toHaveLength(3)
    expect(read.warnings).toEqual([])
  })

  it('the LandXML GNSS example reads to the same pillar and vectors as the CSV example (its covariances were written from the CSV σ and ρ)', () => {
    const csv = readObservationCsv(readFileSync('public/formats/tiepoint-example-gnss.csv', 'utf8'))
    const xml = readLandXml(readFileSync('public/formats/tiepoint-example-gnss.xml', 'utf8'))
    if (!xml.ok) throw new Error(xml.errors.map((e) => `line ${e.line}, ${e.column}: ${e.message}`).join('\n'))
    if (!csv.ok) throw new Error('the CSV example must read')
    expect(xml.warnings).toEqual([])
    expect(xml.controls.map((c) => [c.station, c.east, c.north, c.height])).toEqual(csv.controls.map((c) => [c.station, c.east, c.north, c.height]))
    expect(xml.observations.map((o) => [o.at, o.to])).toEqual(csv.observations.map((o) => [o.at, o.to]))
    xml.observations.forEach((o, i) => {
      const c = csv.observations[i]!.vector!
      expect(o.vector!.d).toEqual(c.d)
      // the covariance terms carry 11 significant digits: σ and ρ agree far below a micrometre and 1e-9
      for (let k = 0; k < 3; k++) {
        expect(Math.abs(o.vector!.sigma[k]! - c.sigma[k]!)).toBeLessThan(1e-12)
        expect(Math.abs(o.vector!.correlation![k]! - c.correlation![k]!)).toBeLessThan(1e-9)
      }
    })
  })
})
