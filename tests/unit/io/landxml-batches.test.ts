// The batched LandXML reader (readLandXmlBatches): records are handed out
// while the file is read, so an upload never holds them all. The fixtures are
// written here by hand from the LandXML 1.2 schema (LandXML.org,
// LandXML-1.2.xsd): Units, CgPoints, Survey/InstrumentSetup/RawObservation.
// Expected counts follow from how the fixture is built (one direction, one
// zenith angle and one slope distance per RawObservation).
import { describe, expect, it } from 'vitest'
import { readLandXml, readLandXmlBatches } from '../../../server/engine/io/landxml'
import type { ObservationRecord } from '../../../server/engine/types'
import { drain } from './read-helpers'

const UNITS = '<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>'
const CONTROL = '<CgPoints><CgPoint name="P0" pntSurv="control">5000 1000</CgPoint></CgPoints>'

/** `setups` set-ups of `perSetup` RawObservations each, one per line, over 50 invented stations. */
function setupsXml(setups: number, perSetup: number, name = (i: number) => `P${i}`): string {
  const out: string[] = []
  for (let s = 0; s < setups; s++) {
    out.push(`<InstrumentSetup id="SU${s}" stationName="${name(s % 50)}" instrumentHeight="1.500">`)
    for (let k = 1; k <= perSetup; k++) {
      out.push(`<RawObservation horizAngle="${(k * 7) % 360}" zenithAngle="90.5" slopeDistance="${100 + k}" targetHeight="1.600"><TargetPoint pntRef="${name((s + k) % 50 === s % 50 ? (s + k + 1) % 50 : (s + k) % 50)}"/></RawObservation>`)
    }
    out.push('</InstrumentSetup>')
  }
  return out.join('\n')
}
const survey = (setups: number, perSetup: number, name?: (i: number) => string) => `<Survey>\n${setupsXml(setups, perSetup, name)}\n</Survey>`
const doc = (...parts: string[]) => `<?xml version="1.0" encoding="UTF-8"?>\n<LandXML version="1.2">\n${parts.join('\n')}\n</LandXML>\n`


describe('readLandXmlBatches', () => {
  it('hands out 3 records per RawObservation in batches of the asked size, all of them by the end', () => {
    const { sizes, records, end } = drain(readLandXmlBatches(doc(UNITS, CONTROL, survey(200, 5)), 500))
    expect(end.ok).toBe(true)
    expect(records).toHaveLength(200 * 5 * 3)
    expect(sizes.length).toBeGreaterThan(1)
    // every batch but the last is at least the asked size (a set-up is never split across the limit's check)
    for (const n of sizes.slice(0, -1)) expect(n).toBeGreaterThanOrEqual(500)
    expect(records.filter((r) => r.kind === 'direction').map((r) => r.set).slice(0, 6)).toEqual(['SU0', 'SU0', 'SU0', 'SU0', 'SU0', 'SU1'])
    if (end.ok) expect(end.controls.map((c) => c.station)).toEqual(['P0'])
  })

  it('gives out the first batch before it has read the end of the file (it streams)', () => {
    // the file is cut short after many set-ups: the reader cannot know that until the end
    const whole = doc(UNITS, survey(400, 5))
    const cut = whole.slice(0, whole.lastIndexOf('<InstrumentSetup'))
    const batches = readLandXmlBatches(cut, 200)
    const first = batches.next()
    expect(first.done).toBe(false)
    expect((first.value as ObservationRecord[]).length).toBeGreaterThanOrEqual(200)
    const rest = drain(batches)
    expect(rest.end.ok).toBe(false)
    if (!rest.end.ok) expect(rest.end.errors[0]!.message).toMatch(/not well-formed/)
  })

  it('stops handing out records at the first error but still lists every error', () => {
    const body = survey(100, 4).replace('slopeDistance="103"', 'slopeDistance="x103"').replace(/targetHeight="1.600"(?![\s\S]*targetHeight="1.600")/, 'targetHeight="big"')
    const batches = readLandXmlBatches(doc(UNITS, body), 50)
    const { records, end } = drain(batches)
    expect(end.ok).toBe(false)
    if (!end.ok) {
      expect(end.errors.map((e) => e.column)).toEqual([
        expect.stringMatching(/InstrumentSetup\[1\]\/RawObservation\[3\]@slopeDistance$/),
        expect.stringMatching(/InstrumentSetup\[100\]\/RawObservation\[4\]@targetHeight$/),
      ])
    }
    // only records read before the first error went out (the first set-up's two good RawObservations at most)
    expect(records.length).toBeLessThanOrEqual(2 * 3)
  })

  it('reads the same records when Units comes after the survey (elements kept until the units are known)', () => {
    const unitsFirst = drain(readLandXmlBatches(doc(UNITS, CONTROL, survey(60, 3)), 100))
    const unitsLast = drain(readLandXmlBatches(doc(CONTROL, survey(60, 3), UNITS), 100))
    expect(unitsLast.end.ok).toBe(true)
    // same records but for their line numbers (Units moved from line 3 to the end)
    const strip = (rs: ObservationRecord[]) => rs.map(({ line: _line, ...r }) => r)
    expect(strip(unitsLast.records)).toEqual(strip(unitsFirst.records))
    expect(unitsLast.records[0]!.line).toBe(unitsFirst.records[0]!.line - 1)
  })

  it('waits for an InstrumentSetup named by an ObservationGroup before it, and keeps document order', () => {
    const group = '<ObservationGroup setupID="LATE"><RawObservation horizAngle="10" slopeDistance="50"><TargetPoint pntRef="B"/></RawObservation></ObservationGroup>'
    const late = '<InstrumentSetup id="LATE" stationName="A"><RawObservation horizAngle="20"><TargetPoint pntRef="C"/></RawObservation></InstrumentSetup>'
    const { records, end } = drain(readLandXmlBatches(doc(UNITS, `<Survey>\n${group}\n${setupsXml(3, 2)}\n${late}\n</Survey>`), 1))
    expect(end.ok).toBe(true)
    expect(records.slice(0, 2).map((r) => [r.at, r.to, r.kind])).toEqual([['A', 'B', 'direction'], ['A', 'B', 'slope_distance']])
    expect(records.at(-1)).toMatchObject({ at: 'A', to: 'C', set: 'LATE' })
    expect(records).toHaveLength(2 + 3 * 2 * 3 + 1)
  })

  it('reads UTF-8 bytes slice by slice without breaking a character cut by a slice boundary', () => {
    // two-byte (Ø) and four-byte (𝑥) station names, enough of them that some fall across the 64 KiB slices
    const name = (i: number) => (i % 2 ? `ØST${i}` : `𝑥${i}`)
    const text = doc(UNITS, survey(300, 6, name))
    expect(Buffer.byteLength(text)).toBeGreaterThan(3 * 65536)
    const fromBytes = drain(readLandXmlBatches(new TextEncoder().encode(text)))
    const fromText = readLandXml(text)
    expect(fromBytes.end.ok && fromText.ok).toBe(true)
    if (fromText.ok) expect(fromBytes.records).toEqual(fromText.observations)
    const names = new Set(fromBytes.records.map((r) => r.at))
    expect([...names].every((n) => /^(ØST\d+|𝑥\d+)$/u.test(n))).toBe(true)
    expect(names.size).toBe(50)
  })

  it('a byte-order mark before the declaration is not part of the document, as bytes or as text', () => {
    const text = doc(UNITS, survey(2, 1))
    const bom = drain(readLandXmlBatches(new Uint8Array([0xef, 0xbb, 0xbf, ...new TextEncoder().encode(text)])))
    expect(bom.end.ok).toBe(true)
    expect(bom.records).toHaveLength(2 * 3)
    expect(readLandXml('\uFEFF' + text).ok).toBe(true)
  })
})
