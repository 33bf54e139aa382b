// The committed demo files (server/db/demo) are exactly what the seeded
// generator produces, both readers accept them, and blunder.json points at a
// real direction row.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { buildDemo } from '../../../server/db/demo/generate'
import { readObservationCsv } from '../../../server/engine/io/csv'
import { readLandXml } from '../../../server/engine/io/landxml'
import { adjustNetwork } from '../../../server/engine/index'

const demoFile = (name: string) => readFileSync(new URL(`../../../server/db/demo/${name}`, import.meta.url), 'utf8')

describe('demo network', () => {
  const csv = demoFile('demo-network.csv')
  const blunder = JSON.parse(demoFile('blunder.json')) as { line: number; kind: string; at: string; to: string }

  it('committed files equal a fresh run of the generator (deterministic seed)', () => {
    const demo = buildDemo()
    expect(demo.csv).toBe(csv)
    expect(demo.xml).toBe(demoFile('demo-network.xml'))
    expect(demo.blunderJson).toBe(demoFile('blunder.json'))
  })
  it('the CSV reads without errors or warnings: 2 control points, 1 benchmark, every kind the demo uses', () => {
    const r = readObservationCsv(csv)
    if (!r.ok) throw new Error(JSON.stringify(r.errors))
    expect(r.warnings).toEqual([])
    expect(r.controls.map((c) => c.station)).toEqual(['CP1', 'CP2', 'BM1'])
    const kinds = new Set(r.observations.map((o) => o.kind))
    expect([...kinds].sort()).toEqual(['direction', 'height_difference', 'horizontal_distance', 'slope_distance', 'zenith'])
    const stations = new Set(r.observations.flatMap((o) => [o.at, o.to]))
    expect(stations.size).toBe(25)
  })
  it('blunder.json names a direction row with the stated stations, and the CSV header does not say which', () => {
    const row = csv.split('\n')[blunder.line - 1]!.split(',')
    expect(row.slice(0, 4)).toEqual([blunder.kind, blunder.at, '', blunder.to])
    const comments = csv.split('\n').filter((l) => l.startsWith('#')).join('\n')
    expect(comments).toMatch(/blunder/)
    expect(comments).not.toContain(String(blunder.line))
  })
  it('the LandXML part reads without errors: control points and direction sets', () => {
    const r = readLandXml(demoFile('demo-network.xml'))
    if (!r.ok) throw new Error(JSON.stringify(r.errors))
    expect(r.controls.map((c) => c.station)).toEqual(['CP1', 'CP2'])
    expect(new Set(r.observations.filter((o) => o.kind === 'direction').map((o) => o.set)).size).toBe(4)
  })

  // The demo exists to be found by data snooping (Baarda 1968, critical |w| 3.29
  // at α0 = 0.001): the one planted blunder must be the one flagged, and the
  // rest of the simulated noise must pass the global test.
  it('the engine flags exactly the planted blunder, and the network passes the global test without it', () => {
    const r = readObservationCsv(csv)
    if (!r.ok) throw new Error(JSON.stringify(r.errors))
    const withBlunder = adjustNetwork({ controls: r.controls, observations: r.observations })
    if (!withBlunder.ok) throw new Error(withBlunder.reason)
    expect(withBlunder.result.observations.filter((o) => o.flagged).map((o) => o.line)).toEqual([blunder.line])
    expect(withBlunder.result.globalTest.passed).toBe(false)

    const observations = r.observations.map((o) => (o.line === blunder.line ? { ...o, excluded: true } : o))
    const without = adjustNetwork({ controls: r.controls, observations })
    if (!without.ok) throw new Error(without.reason)
    expect(without.result.observations.filter((o) => o.flagged)).toEqual([])
    expect(without.result.globalTest.passed).toBe(true)
  })
})
