// The second demo file (server/db/demo/demo-gnss.csv) is exactly what its
// seeded generator produces, the reader accepts it, and its vectors agree with
// each other and with the traverse's distances as measured things must — a
// check of the invented data against its own geometry, not against the engine.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { generateGnssDemo, gnssDemoStations } from '../../../server/db/demo/generate-gnss'
import { adjustNetwork } from '../../../server/engine/index'
import { GNSS_DEMO } from '../../../server/db/demo/gnss-project'
import { readObservationCsv } from '../../../server/engine/io/csv'
import { findCrs } from '../../../shared/crs'

const csv = readFileSync(new URL(`../../../server/db/demo/${GNSS_DEMO.file}`, import.meta.url), 'utf8')

describe('GNSS demo network', () => {
  const r = readObservationCsv(csv)
  if (!r.ok) throw new Error(JSON.stringify(r.errors))
  const vec = (a: string, b: string) => r.observations.find((o) => o.kind === 'gnss_baseline' && o.at === a && o.to === b)!.vector!

  it('the committed file equals a fresh run of the generator (deterministic seed)', () => {
    expect(generateGnssDemo()).toBe(csv)
  })

  it('reads without errors or warnings: one held pillar, six correlated vectors, a traverse of directions, distances and zeniths', () => {
    expect(r.warnings).toEqual([])
    expect(r.controls.map((c) => c.station)).toEqual(['W01'])
    expect(r.observations.filter((o) => o.kind === 'gnss_baseline')).toHaveLength(6)
    for (const o of r.observations.filter((x) => x.kind === 'gnss_baseline')) expect(o.vector!.correlation).not.toBeNull()
    expect(new Set(r.observations.map((o) => o.kind))).toEqual(new Set(['gnss_baseline', 'direction', 'slope_distance', 'zenith']))
  })

  it('the triangle W01 → W02 → W03 closes against W01 → W03 within its noise (property: 3σ of the sum of three vectors)', () => {
    const a = vec('W01', 'W02')
    const b = vec('W02', 'W03')
    const c = vec('W01', 'W03')
    for (let i = 0; i < 3; i++) {
      const misclosure = a.d[i]! + b.d[i]! - c.d[i]!
      const sigma = Math.sqrt(a.sigma[i]! ** 2 + b.sigma[i]! ** 2 + c.sigma[i]! ** 2)
      expect(Math.abs(misclosure)).toBeLessThan(3 * sigma)
    }
  })

  it('the vector W01 → T1 is as long as the slope distance T1 → W01 between the marks (hi, ht lift the chord by a few mm only)', () => {
    const v = vec('W01', 'T1')
    const s = r.observations.find((o) => o.kind === 'slope_distance' && o.at === 'T1' && o.to === 'W01')!
    expect(Math.abs(Math.hypot(...v.d) - s.value)).toBeLessThan(0.05)
  })

  it('the project settings name a projected CRS the app offers, on the GRS80 ellipsoid the vectors were made on', () => {
    expect(findCrs(GNSS_DEMO.crs)?.proj4).toMatch(/\+ellps=GRS80/)
    expect(csv).toContain(`N = ${GNSS_DEMO.geoidSeparationM} m`)
  })

  it('the combined 3D adjustment recovers the invented true positions within 3σ, and the global test passes (the data are consistent)', () => {
    const out = adjustNetwork({
      controls: r.controls, observations: r.observations,
      projection: { proj4: findCrs(GNSS_DEMO.crs)!.proj4, geoidSeparationM: GNSS_DEMO.geoidSeparationM }, refraction: { k: 0.13, sigmaK: 0.05 },
    })
    if (!out.ok) throw new Error(out.reason)
    expect(out.result.globalTest.passed).toBe(true)
    const truth = new Map(gnssDemoStations().map((s) => [s.name, s]))
    for (const s of out.result.stations.filter((x) => !x.fixed)) {
      const t = truth.get(s.name)!
      expect(Math.abs(s.east! - t.east)).toBeLessThan(3 * s.sdEast! + 1e-4)
      expect(Math.abs(s.north! - t.north)).toBeLessThan(3 * s.sdNorth! + 1e-4)
      expect(Math.abs(s.height! - t.height)).toBeLessThan(3 * s.sdHeight! + 1e-4)
    }
    expect(out.result.observations.filter((o) => o.kind === 'gnss_baseline').every((o) => o.vectorTest && !o.vectorTest.flagged)).toBe(true)
  })
})
