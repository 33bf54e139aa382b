// The downloadable template and example file (public/formats) must be what the
// reader accepts: a template that only holds the header, and an example that
// reads without a single error.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { readObservationCsv } from '../../server/engine/io/csv'

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
})
