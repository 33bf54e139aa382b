// LandXML 1.2 reader. The fixtures are written by hand from the LandXML 1.2
// schema (LandXML.org, LandXML-1.2.xsd); expected values follow from the unit
// definitions (U.S. survey foot = 1200/3937 m, 24 FR 5348, 1959; 1 gon = π/200
// rad, ISO 80000-3) and from line numbers counted in the fixture text.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { readLandXml } from '../../../server/engine/io/landxml'
import { errorsOf, ok } from './read-helpers'

const DEG = Math.PI / 180
const fixture = (name: string) => readFileSync(new URL(`../../fixtures/io/${name}`, import.meta.url), 'utf8')

const UNITS = '<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>'
const doc = (body: string, units = UNITS) => `<?xml version="1.0"?>\n<LandXML version="1.2">\n${units}\n${body}\n</LandXML>\n`

describe('metric fixture (landxml-metric.xml)', () => {
  const r = ok(readLandXml(fixture('landxml-metric.xml')))

  it('CgPoints marked pntSurv="control" become fixed control, northing first', () => {
    expect(r.controls).toEqual([
      { line: 9, station: 'K1', east: 1000, north: 5000, height: 50, sdEast: null, sdNorth: null, sdHeight: null },
      { line: 10, station: 'K2', east: 1200, north: 5100, height: null, sdEast: null, sdNorth: null, sdHeight: null },
    ])
  })
  it('other CgPoints are reported, not dropped silently', () => {
    expect(r.warnings).toContainEqual(
      expect.objectContaining({ line: 11, column: 'LandXML[1]/CgPoints[1]/CgPoint[3]', message: expect.stringContaining("'N3'") }),
    )
  })
  it('a RawObservation with three measurements gives direction, zenith and slope distance at its source line', () => {
    const first = r.observations.filter((o) => o.line === 18)
    expect(first.map((o) => o.kind)).toEqual(['direction', 'zenith', 'slope_distance'])
    expect(first[0]).toMatchObject({ at: 'K1', to: 'K2', value: 0, set: 'SU1', hi: 1.55, ht: 1.7, sigma: null })
    expect(first[1]!.value).toBeCloseTo(90.5 * DEG, 15)
    expect(first[1]!.set).toBeNull()
    expect(first[2]!.value).toBe(223.61)
  })
  it('horizDistance becomes a horizontal distance; desc becomes the note', () => {
    const second = r.observations.filter((o) => o.line === 21)
    expect(second.map((o) => o.kind)).toEqual(['direction', 'horizontal_distance'])
    expect(second[0]!.value).toBeCloseTo(45.25 * DEG, 15)
    expect(second[1]).toMatchObject({ value: 111.8034, note: 'to N3', ht: 1.6 })
  })
  it('a RawObservation in an ObservationGroup joins its set-up by setupID', () => {
    const g = r.observations.filter((o) => o.line === 29)
    expect(g.map((o) => o.kind)).toEqual(['direction', 'azimuth'])
    expect(g[0]).toMatchObject({ at: 'N3', to: 'K1', set: 'SU2', hi: 1.4 })
    expect(g[0]!.value).toBeCloseTo(Math.PI, 15)
    expect(g[1]!.value).toBeCloseTo(1.5 * Math.PI, 15)
  })
  it('metadata elements (Project, SurveyHeader, Backsight) raise no warnings', () => {
    expect(r.warnings).toHaveLength(1)
  })
})

describe('imperial fixture (landxml-imperial.xml): U.S. survey feet, grads, radians', () => {
  const r = ok(readLandXml(fixture('landxml-imperial.xml')))
  it('converts coordinates with 1200/3937 m per foot', () => {
    expect(r.controls[0]!.north).toBeCloseTo(1200, 9)
    expect(r.controls[0]!.east).toBeCloseTo(1000 * (1200 / 3937), 9)
    expect(r.controls[0]!.height).toBeCloseTo(100 * (1200 / 3937), 9)
  })
  it('converts angles in grads and the direction unit in radians', () => {
    const [dir, zen, az, sd] = r.observations
    expect(dir!.value).toBeCloseTo(Math.PI / 2, 15)
    expect(zen!.value).toBeCloseTo(Math.PI / 2, 15)
    expect(az!.value).toBe(1.5)
    expect(sd!.value).toBeCloseTo(1200, 9)
    expect(dir!.hi).toBeCloseTo(5 * (1200 / 3937), 12)
    expect(dir!.ht).toBeCloseTo(6 * (1200 / 3937), 12)
  })
  it('a set-up without id gets a set named by its ordinal', () => {
    expect(r.observations[0]!.set).toBe('setup 1')
  })
})

describe('units', () => {
  it('international foot and packed dd.mm.ss', () => {
    const r = ok(
      readLandXml(
        doc(
          '<Survey><InstrumentSetup stationName="A"><RawObservation horizAngle="123.4506" slopeDistance="100"><TargetPoint pntRef="B"/></RawObservation></InstrumentSetup></Survey>',
          '<Units><Imperial linearUnit="foot" angularUnit="decimal dd.mm.ss"/></Units>',
        ),
      ),
    )
    expect(r.observations[0]!.value).toBeCloseTo((123 + 45 / 60 + 6 / 3600) * DEG, 14)
    expect(r.observations[1]!.value).toBeCloseTo(30.48, 12)
  })
  it('missing Units is an error: the reader does not guess', () => {
    const errs = errorsOf(readLandXml('<LandXML>\n<CgPoints/>\n</LandXML>'))
    expect(errs[0]).toMatchObject({ line: 1, column: 'LandXML[1]' })
  })
  it('unsupported linear and angular units are errors naming the attribute', () => {
    const errs = errorsOf(readLandXml(doc('', '<Units><Metric linearUnit="furlong" angularUnit="mils"/></Units>')))
    expect(errs.map((e) => e.column)).toEqual(['LandXML[1]/Units[1]/Metric[1]@linearUnit', 'LandXML[1]/Units[1]/Metric[1]@angularUnit'])
    expect(errs[0]!.line).toBe(3)
  })
})

describe('errors and warnings name the element and its source line', () => {
  it('malformed XML reports the parser line', () => {
    const errs = errorsOf(readLandXml('<?xml version="1.0"?>\n<LandXML>\n<Units>\n</LandXML>'))
    expect(errs[0]!.line).toBeGreaterThanOrEqual(2)
    expect(errs[0]!.column).toBe('xml')
  })
  it('a root other than LandXML is refused', () => {
    expect(errorsOf(readLandXml('<Other/>'))[0]!.message).toMatch(/not LandXML/)
  })
  it('an empty document is refused', () => {
    expect(errorsOf(readLandXml('  '))[0]).toMatchObject({ line: 1, column: 'xml' })
  })
  it('every bad RawObservation is reported, and nothing is returned', () => {
    const body = [
      '<Survey>', // 4
      '<InstrumentSetup stationName="A" instrumentHeight="x1">', // 5
      '<RawObservation horizAngle="abc"><TargetPoint pntRef="B"/></RawObservation>', // 6
      '<RawObservation horizAngle="10" slopeDistance="-3"><TargetPoint pntRef="B"/></RawObservation>', // 7
      '<RawObservation zenithAngle="400"><TargetPoint pntRef="B"/></RawObservation>', // 8
      '<RawObservation horizAngle="10"/>', // 9
      '<RawObservation horizAngle="10"><TargetPoint pntRef="A"/></RawObservation>', // 10
      '</InstrumentSetup>',
      '<ObservationGroup><RawObservation setupID="nope" horizAngle="1"><TargetPoint pntRef="B"/></RawObservation></ObservationGroup>', // 12
      '</Survey>',
    ].join('\n')
    const errs = errorsOf(readLandXml(doc(body)))
    expect(errs.map((e) => [e.line, e.column])).toEqual([
      [5, 'LandXML[1]/Survey[1]/InstrumentSetup[1]@instrumentHeight'],
      [6, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[1]@horizAngle'],
      [7, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[2]@slopeDistance'],
      [8, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[3]@zenithAngle'],
      [9, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[4]'],
      [10, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[5]'],
      [12, 'LandXML[1]/Survey[1]/ObservationGroup[1]/RawObservation[1]@setupID'],
    ])
  })
  it('unknown elements and unread attributes become warnings with path and ordinal', () => {
    const body = [
      '<Alignments/>', // 4
      '<Survey>', // 5
      '<InstrumentSetup stationName="A">', // 6
      '<RawObservation horizAngle="1" vertDistance="2"><TargetPoint pntRef="B"/><Widget/></RawObservation>', // 7
      '<Gadget/><Gadget/>', // 8
      '</InstrumentSetup>',
      '</Survey>',
    ].join('\n')
    const r = ok(readLandXml(doc(body)))
    expect(r.warnings.map((w) => [w.line, w.column])).toEqual([
      [4, 'LandXML[1]/Alignments[1]'],
      [8, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/Gadget[1]'],
      [8, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/Gadget[2]'],
      [7, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[1]/Widget[1]'],
      [7, 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[1]@vertDistance'],
    ])
  })
  it('satellite elements outside Survey\'s GPSSetup/GPSVector refuse the file with line and path (ignoring them could adjust another network)', () => {
    const body = [
      '<Survey>', // 4
      '<InstrumentSetup stationName="A"><RawObservation horizAngle="1"><TargetPoint pntRef="B"/></RawObservation></InstrumentSetup>', // 5
      '<ObservationGroup>', // 6
      '<GPSVector dX="1" dY="2" dZ="3"/>', // 7
      '</ObservationGroup>',
      '</Survey>',
    ].join('\n')
    const errs = errorsOf(readLandXml(doc(body)))
    expect(errs).toEqual([expect.objectContaining({ line: 7, column: 'LandXML[1]/Survey[1]/ObservationGroup[1]/GPSVector[1]', message: expect.stringMatching(/GPSVector is not read here.*directly inside Survey/) })])
  })
  it('control CgPoints with bad text or duplicate names are errors', () => {
    const body = '<CgPoints>\n<CgPoint name="A" pntSurv="control">1 2 3 4</CgPoint>\n<CgPoint name="B" pntSurv="control">1 x</CgPoint>\n<CgPoint name="C" pntSurv="control">1 2</CgPoint>\n<CgPoint name="C" pntSurv="control">1 2</CgPoint>\n<CgPoint pntSurv="control">1 2</CgPoint>\n</CgPoints>'
    const errs = errorsOf(readLandXml(doc(body)))
    expect(errs.map((e) => e.line)).toEqual([5, 6, 8, 9])
  })
  it('CRLF line endings give the same line numbers', () => {
    const text = fixture('landxml-metric.xml')
    const a = ok(readLandXml(text))
    const b = ok(readLandXml('\uFEFF' + text.replace(/\n/g, '\r\n')))
    expect(b.observations).toEqual(a.observations)
  })
})

describe('the streaming (SAX) read', () => {
  it('a start tag spread over several lines is reported at the line where it begins', () => {
    const body = '<Survey>\n<InstrumentSetup stationName="A">\n<RawObservation\n  horizAngle="400"\n  slopeDistance="10">\n<TargetPoint pntRef="B"/></RawObservation></InstrumentSetup></Survey>'
    const errs = errorsOf(readLandXml(doc(body)))
    // doc(): line 1 declaration, 2 LandXML, 3 Units, 4 Survey, 5 InstrumentSetup, 6 RawObservation begins
    expect(errs).toEqual([expect.objectContaining({ line: 6, column: 'LandXML[1]/Survey[1]/InstrumentSetup[1]/RawObservation[1]@horizAngle' })])
  })
  it('entities declared in a DTD are never expanded: the file is refused at the reference', () => {
    const text = '<?xml version="1.0"?>\n<!DOCTYPE LandXML [<!ENTITY d "123.4">]>\n<LandXML>\n<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>\n<CgPoints><CgPoint name="A" pntSurv="control">&d; 1</CgPoint></CgPoints>\n</LandXML>'
    const errs = errorsOf(readLandXml(text))
    expect(errs).toHaveLength(1)
    expect(errs[0]).toMatchObject({ line: 5, column: 'xml' })
    expect(errs[0]!.message).toMatch(/not well-formed/)
  })
  it('the five predefined entities and character references still read (XML 1.0, section 4.6)', () => {
    const body = '<Survey><InstrumentSetup stationName="A&amp;B"><RawObservation horizAngle="1" desc="&lt;x&#62;"><TargetPoint pntRef="C"/></RawObservation></InstrumentSetup></Survey>'
    const r = ok(readLandXml(doc(body)))
    expect(r.observations[0]).toMatchObject({ at: 'A&B', note: '<x>' })
  })
  it('a file longer than one parser slice reads the same as its parts (64 Ki characters)', () => {
    const setups = Array.from({ length: 900 }, (_, i) => `<InstrumentSetup id="S${i}" stationName="P${i}"><RawObservation horizAngle="${(i % 359) + 0.5}" slopeDistance="${100 + i}"><TargetPoint pntRef="Q${i}"/></RawObservation></InstrumentSetup>`)
    const text = doc(`<Survey>\n${setups.join('\n')}\n</Survey>`)
    expect(text.length).toBeGreaterThan(1 << 17)
    const r = ok(readLandXml(text))
    expect(r.observations).toHaveLength(1800)
    // line 4 is <Survey>, set-up i sits on line 5 + i
    expect(r.observations[1798]).toMatchObject({ line: 904, kind: 'direction', at: 'P899', to: 'Q899', set: 'S899' })
  })
})

describe('the file unit is kept beside the SI value', () => {
  it('U.S. survey feet for distances, grads for angles, the direction unit (radians) for the azimuth', () => {
    const r = ok(readLandXml(fixture('landxml-imperial.xml')))
    expect(r.observations.map((o) => [o.kind, o.unit])).toEqual([
      ['direction', 'gon'],
      ['zenith', 'gon'],
      ['azimuth', 'rad'],
      ['slope_distance', 'usft'],
    ])
    // 3937 US survey feet = 1200 m (1200/3937 m per foot, 24 FR 5348, 1959)
    expect(r.observations[3]!.value).toBeCloseTo(1200, 9)
  })
  it('metres with decimal degrees; international feet with packed dd.mm.ss', () => {
    const body = '<Survey><InstrumentSetup stationName="A"><RawObservation horizAngle="123.4506" slopeDistance="100"><TargetPoint pntRef="B"/></RawObservation></InstrumentSetup></Survey>'
    expect(ok(readLandXml(doc(body))).observations.map((o) => o.unit)).toEqual(['deg', 'm'])
    const feet = ok(readLandXml(doc(body, '<Units><Imperial linearUnit="foot" angularUnit="decimal dd.mm.ss"/></Units>')))
    expect(feet.observations.map((o) => o.unit)).toEqual(['dms', 'ft'])
    expect(feet.observations[1]!.value).toBeCloseTo(30.48, 12)
  })
  it('a metric multiple keeps its own symbol', () => {
    const body = '<Survey><InstrumentSetup stationName="A"><RawObservation horizDistance="100000"><TargetPoint pntRef="B"/></RawObservation></InstrumentSetup></Survey>'
    const r = ok(readLandXml(doc(body, '<Units><Metric linearUnit="millimeter" angularUnit="decimal degrees"/></Units>')))
    expect(r.observations[0]).toMatchObject({ kind: 'horizontal_distance', unit: 'mm' })
    expect(r.observations[0]!.value).toBeCloseTo(100, 12)
  })
})
