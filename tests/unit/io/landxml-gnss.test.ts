// GNSS vectors in LandXML 1.2 (server/engine/io/landxml-gnss.ts). Element and
// attribute names from LandXML-1.2.xsd (LandXML.org, 2008): GPSSetup (id,
// stationName, antennaHeight, GPSPosition), GPSVector (dX dY dZ, setupID_A,
// setupID_B, TargetPoint, GPSQCInfoLevel2) and GPSQCInfoLevel2 (covarianceXX …
// covarianceZZ). The covariance matrices below are built by hand, and σ and ρ
// follow from the definitions σi = √Cii, ρij = Cij / (σi·σj), worked by hand
// beside each check. 1 ft = 0.3048 m exactly (international foot, Federal
// Register 24 FR 5348, 1959). Line numbers are counted in the fixture text.
import { describe, expect, it } from 'vitest'
import { readLandXml, readLandXmlBatches } from '../../../server/engine/io/landxml'
import { errorsOf, ok } from './read-helpers'

const METRIC = '<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>'
const FEET = '<Units><Imperial linearUnit="foot" angularUnit="decimal degrees"/></Units>'
// line 1 is the declaration, 2 <LandXML>, 3 Units, 4 <Survey>, so the body starts on line 5
const doc = (body: string[], units = METRIC) => `<?xml version="1.0"?>\n<LandXML version="1.2">\n${units}\n<Survey>\n${body.join('\n')}\n</Survey>\n</LandXML>\n`
const setups = [
  '<GPSSetup id="s1" stationName="P1" antennaHeight="0"/>', // 5
  '<GPSSetup id="s2" antennaHeight="0"><GPSPosition><TargetPoint pntRef="P2"/></GPSPosition></GPSSetup>', // 6
]
const qc = (c: string) => `<GPSQCInfoLevel2 ${c}/>`

describe('a vector and its covariance become a gnss_baseline record', () => {
  // C (m²) = [[9e-6, 1.2e-6, -2.4e-6], [1.2e-6, 4e-6, 4e-6], [-2.4e-6, 4e-6, 1.6e-5]] written by hand:
  // σX = √9e-6 = 3 mm, σY = √4e-6 = 2 mm, σZ = √1.6e-5 = 4 mm;
  // ρXY = 1.2e-6 / (0.003·0.002) = 0.2, ρXZ = −2.4e-6 / (0.003·0.004) = −0.2, ρYZ = 4e-6 / (0.002·0.004) = 0.5
  // (det R = 0.75 − 0.06 − 0.06 = 0.63 > 0: positive definite).
  const text = doc([
    ...setups,
    '<GPSVector dX="412.3456" dY="-233.1" dZ="318.002" setupID_A="s1" setupID_B="s2" purpose="session A">', // 7
    '<TargetPoint pntRef="P2"/><GPSQCInfoLevel1 GPSSolnType="fixed"/>',
    qc('covarianceXX="9e-6" covarianceXY="1.2e-6" covarianceXZ="-2.4e-6" covarianceYY="4e-6" covarianceYZ="4e-6" covarianceZZ="1.6e-5"'),
    '</GPSVector>',
  ])
  const r = ok(readLandXml(text))

  it('runs from the mark of setupID_A to that of setupID_B, at the GPSVector line, in metres', () => {
    expect(r.observations).toHaveLength(1)
    const o = r.observations[0]!
    expect(o).toMatchObject({ line: 7, kind: 'gnss_baseline', at: 'P1', to: 'P2', from: null, hi: null, ht: null, sigma: null, unit: 'm', note: 'session A' })
    expect(o.vector!.d).toEqual([412.3456, -233.1, 318.002])
    // length √(412.3456² + 233.1² + 318.002²) = 570.32… m
    expect(o.value).toBeCloseTo(Math.sqrt(412.3456 ** 2 + 233.1 ** 2 + 318.002 ** 2), 9)
  })
  it('σ are the square roots of the variances (3, 2, 4 mm) and ρ the covariances over σ·σ (0.2, −0.2, 0.5)', () => {
    const v = r.observations[0]!.vector!
    expect(v.sigma[0]).toBeCloseTo(0.003, 12)
    expect(v.sigma[1]).toBeCloseTo(0.002, 12)
    expect(v.sigma[2]).toBeCloseTo(0.004, 12)
    expect(v.correlation![0]).toBeCloseTo(0.2, 12)
    expect(v.correlation![1]).toBeCloseTo(-0.2, 12)
    expect(v.correlation![2]).toBeCloseTo(0.5, 12)
  })
  it('set-ups with a zero antenna height and GPSQCInfoLevel1 raise no warning', () => {
    expect(r.warnings).toEqual([])
  })
})

describe('order in the file does not matter (the reader streams)', () => {
  const c = qc('covarianceXX="9e-6" covarianceXY="0" covarianceXZ="0" covarianceYY="4e-6" covarianceYZ="0" covarianceZZ="1.6e-5"')
  const vector = `<GPSVector dX="1" dY="2" dZ="3" setupID_A="s1" setupID_B="s2"><TargetPoint/>${c}</GPSVector>`
  it('a vector before its set-ups, and Units after the Survey, read to the same record as in the usual order', () => {
    const usual = ok(readLandXml(doc([...setups, vector]))).observations
    const late = `<?xml version="1.0"?>\n<LandXML version="1.2">\n<Survey>\n${[vector, ...setups].join('\n')}\n</Survey>\n${METRIC}\n</LandXML>\n`
    const r = ok(readLandXml(late))
    expect(r.observations.map(({ line: _l, ...o }) => o)).toEqual(usual.map(({ line: _l, ...o }) => o))
    expect(r.observations[0]!.line).toBe(4)
  })
  it('in batches, the vectors come with the last batch after the raw observations', () => {
    const raw = '<InstrumentSetup stationName="P1"><RawObservation horizAngle="1"><TargetPoint pntRef="P2"/></RawObservation><RawObservation horizAngle="2"><TargetPoint pntRef="P3"/></RawObservation></InstrumentSetup>'
    const batches = readLandXmlBatches(doc([raw, ...setups, vector]), 1)
    const kinds: string[][] = []
    for (;;) {
      const step = batches.next()
      if (step.done) { expect(step.value.ok).toBe(true); break }
      kinds.push(step.value.map((o) => o.kind))
    }
    expect(kinds.flat()).toEqual(['direction', 'direction', 'gnss_baseline'])
    expect(kinds[kinds.length - 1]).toEqual(['gnss_baseline'])
  })
})

describe('a file in feet: the vector in ft, the covariance in ft²', () => {
  // dX dY dZ = 1000, −500, 250 ft = 304.8, −152.4, 76.2 m.
  // C (ft²): XX = 1e-4 → σX = 0.01 ft = 3.048 mm; YY = 4e-4 → 0.02 ft = 6.096 mm; ZZ = 2.5e-5 → 0.005 ft = 1.524 mm;
  // XY = −6e-5 → ρXY = −6e-5 / (0.01·0.02) = −0.3; XZ = YZ = 0 → ρ = 0. ρ has no unit, so the foot cancels.
  const text = doc([
    ...setups,
    '<GPSVector dX="1000" dY="-500" dZ="250" setupID_A="s2" setupID_B="s1">', // 7
    '<TargetPoint pntRef="P1"/>',
    qc('covarianceXX="1e-4" covarianceXY="-6e-5" covarianceXZ="0" covarianceYY="4e-4" covarianceYZ="0" covarianceZZ="2.5e-5" referenceVariance="1"'),
    '</GPSVector>',
  ], FEET)
  const r = ok(readLandXml(text))
  it('converts with 0.3048 m per foot and keeps the file unit beside the value', () => {
    const o = r.observations[0]!
    expect(o).toMatchObject({ at: 'P2', to: 'P1', unit: 'ft' })
    expect(o.vector!.d[0]).toBeCloseTo(304.8, 9)
    expect(o.vector!.d[1]).toBeCloseTo(-152.4, 9)
    expect(o.vector!.d[2]).toBeCloseTo(76.2, 9)
    expect(o.vector!.sigma[0]).toBeCloseTo(0.003048, 12)
    expect(o.vector!.sigma[1]).toBeCloseTo(0.006096, 12)
    expect(o.vector!.sigma[2]).toBeCloseTo(0.001524, 12)
    expect(o.vector!.correlation![0]).toBeCloseTo(-0.3, 12)
    expect(o.vector!.correlation![1]).toBe(0)
    expect(o.vector!.correlation![2]).toBe(0)
  })
})

describe('what is read but not applied is said once', () => {
  it('a non-zero antenna height and a reference variance other than 1 each give one warning', () => {
    const c = 'covarianceXX="1e-5" covarianceXY="0" covarianceXZ="0" covarianceYY="1e-5" covarianceYZ="0" covarianceZZ="1e-5" referenceVariance="2.5"'
    const r = ok(readLandXml(doc([
      '<GPSSetup id="s1" stationName="P1" antennaHeight="1.5"/>', // 5
      '<GPSSetup id="s2" stationName="P2" antennaHeight="1.6"/>', // 6
      '<GPSSetup id="s3" stationName="P3" antennaHeight="0"/>', // 7
      `<GPSVector dX="10" dY="20" dZ="30" setupID_A="s1" setupID_B="s2"><TargetPoint/>${qc(c)}</GPSVector>`, // 8
      `<GPSVector dX="10" dY="20" dZ="31" setupID_A="s2" setupID_B="s3"><TargetPoint/>${qc(c)}</GPSVector>`, // 9
    ])))
    expect(r.observations).toHaveLength(2)
    expect(r.warnings.map((w) => [w.line, w.column])).toEqual([
      [5, 'LandXML[1]/Survey[1]/GPSSetup[1]@antennaHeight'],
      [8, 'LandXML[1]/Survey[1]/GPSVector[1]/GPSQCInfoLevel2[1]@referenceVariance'],
    ])
    expect(r.warnings[0]!.message).toMatch(/mark to mark/)
  })
  it('a GNSS point position outside a set-up is a warning: it is not used', () => {
    const r = ok(readLandXml(doc(['<GPSPosition wgsLatitude="54.4" wgsLongitude="14.6" wgsHeight="50"><TargetPoint pntRef="P9"/></GPSPosition>'])))
    expect(r.warnings).toContainEqual({ line: 5, column: 'LandXML[1]/Survey[1]/GPSPosition[1]', message: expect.stringMatching(/point position is not used/) })
    expect(r.observations).toEqual([])
  })
})

describe('malformed vectors: every problem named with its line and element path, nothing returned', () => {
  const good = 'covarianceXX="1e-5" covarianceXY="0" covarianceXZ="0" covarianceYY="1e-5" covarianceYZ="0" covarianceZZ="1e-5"'
  it('bad numbers, unknown set-ups, a missing covariance, a negative variance and a non-positive-definite matrix', () => {
    const r = readLandXml(doc([
      ...setups,
      `<GPSVector dX="12x.5" dY="1" dZ="2" setupID_A="s1" setupID_B="s2"><TargetPoint/>${qc(good)}</GPSVector>`, // 7
      `<GPSVector dX="1" dY="1" dZ="2" setupID_A="s1" setupID_B="nope"><TargetPoint/>${qc(good)}</GPSVector>`, // 8
      '<GPSVector dX="1" dY="1" dZ="2" setupID_A="s1" setupID_B="s2"><TargetPoint/></GPSVector>', // 9
      `<GPSVector dX="1" dY="1" dZ="2" setupID_A="s1" setupID_B="s2"><TargetPoint/>${qc(good.replace('covarianceYY="1e-5"', 'covarianceYY="-1e-5"'))}</GPSVector>`, // 10
      // ρ = 0.9, 0.9, −0.9: each within (−1, 1), but together not positive definite (det R = 1 − 3·0.81 − 2·0.729 < 0)
      `<GPSVector dX="1" dY="1" dZ="2" setupID_A="s1" setupID_B="s2"><TargetPoint/>${qc('covarianceXX="1e-6" covarianceXY="9e-7" covarianceXZ="9e-7" covarianceYY="1e-6" covarianceYZ="-9e-7" covarianceZZ="1e-6"')}</GPSVector>`, // 11
      `<GPSVector dX="1" dY="1" dZ="2" setupID_A="s1" setupID_B="s2"><TargetPoint pntRef="P7"/>${qc(good.replace(' covarianceXZ="0"', ''))}</GPSVector>`, // 12
      `<GPSVector dY="1" dZ="2" setupID_A="s1" setupID_B="s1"><TargetPoint/>${qc(good)}</GPSVector>`, // 13
    ]))
    const errs = errorsOf(r)
    expect(errs.map((e) => [e.line, e.column])).toEqual([
      [7, 'LandXML[1]/Survey[1]/GPSVector[1]@dX'],
      [8, 'LandXML[1]/Survey[1]/GPSVector[2]@setupID_B'],
      [9, 'LandXML[1]/Survey[1]/GPSVector[3]'],
      [10, 'LandXML[1]/Survey[1]/GPSVector[4]/GPSQCInfoLevel2[1]@covarianceYY'],
      [11, 'LandXML[1]/Survey[1]/GPSVector[5]/GPSQCInfoLevel2[1]'],
      [12, 'LandXML[1]/Survey[1]/GPSVector[6]/TargetPoint[1]@pntRef'],
      [12, 'LandXML[1]/Survey[1]/GPSVector[6]/GPSQCInfoLevel2[1]@covarianceXZ'],
      [13, 'LandXML[1]/Survey[1]/GPSVector[7]'],
      [13, 'LandXML[1]/Survey[1]/GPSVector[7]@dX'],
    ])
    expect(errs[0]!.message).toBe("'12x.5' is not a number")
    expect(errs[1]!.message).toMatch(/set-up 'nope', which the file does not define/)
    expect(errs[2]!.message).toMatch(/no GPSQCInfoLevel2/)
    expect(errs[3]!.message).toMatch(/variance must be positive/)
    expect(errs[4]!.message).toMatch(/not positive definite/)
    expect(errs[5]!.message).toMatch(/'P7' is not the mark of setupID_B \('P2'\)/)
    expect(errs[7]!.message).toMatch(/joins mark 'P1' to itself/)
  })
  it('set-ups without an id or a mark, or with two marks or a reused id, are errors', () => {
    const errs = errorsOf(readLandXml(doc([
      '<GPSSetup stationName="P1"/>', // 5
      '<GPSSetup id="s2"/>', // 6
      '<GPSSetup id="s3" stationName="P3"><GPSPosition pntRef="P4"/></GPSSetup>', // 7
      '<GPSSetup id="s3" stationName="P5"/>', // 8
    ])))
    expect(errs.map((e) => [e.line, e.column])).toEqual([
      [5, 'LandXML[1]/Survey[1]/GPSSetup[1]@id'],
      [6, 'LandXML[1]/Survey[1]/GPSSetup[2]@stationName'],
      [7, 'LandXML[1]/Survey[1]/GPSSetup[3]'],
      [8, 'LandXML[1]/Survey[1]/GPSSetup[4]@id'],
    ])
    expect(errs[2]!.message).toMatch(/two different marks \('P3', 'P4'\)/)
  })
})
