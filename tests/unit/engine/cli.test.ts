// The adjust command: exit codes 0 (solved), 2 (bad input, message names line
// and column), 3 (unsolvable, message names the cause), and the JSON contract.
import { spawnSync } from 'node:child_process'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { controlsOf, generate3d, mountainNetwork } from './truth3d'
import { main } from '../../../server/engine/cli'

const root = join(__dirname, '../../..')
const dir = mkdtempSync(join(tmpdir(), 'tiepoint-cli-'))

function run(csv: string, ...args: string[]) {
  return runFile('csv', csv, ...args)
}

function runFile(ext: string, csv: string, ...args: string[]) {
  const file = join(dir, `net-${Math.random().toString(36).slice(2)}.${ext}`)
  writeFileSync(file, csv)
  const p = spawnSync(join(root, 'node_modules/.bin/tsx'), [join(root, 'server/engine/cli.ts'), file, ...args], { encoding: 'utf8', cwd: root })
  return { code: p.status, out: p.stdout, err: p.stderr }
}

// invented quadrilateral: A, B held; C, D new; directions in degrees, distances in metres
const good = `# invented network for the command-line test
kind,at,from,to,value,unit,sigma,hi,ht,set,length,note
control,A,,,1000 1000 100,m,,,,,,
control,B,,,1600 1050,m,,,,,,
direction,A,,B,0,deg,,,,,,
direction,A,,C,322.4902,deg,,,,,,
direction,A,,D,281.1036,deg,,,,,,
horizontal_distance,A,,C,743.303,m,,,,,,
horizontal_distance,A,,D,452.769,m,,,,,,
direction,B,,A,0,deg,,,,,,
direction,B,,C,88.4236,deg,,,,,,
direction,B,,D,40.7909,deg,,,,,,
horizontal_distance,B,,C,452.770,m,,,,,,
horizontal_distance,B,,D,680.074,m,,,,,,
horizontal_distance,C,,D,502.494,m,,,,,,
height_difference,A,,C,2.503,m,,,,,0.7,
height_difference,C,,D,-1.201,m,,,,,0.5,
height_difference,D,,A,-1.300,m,,,,,0.5,
`

describe('npm run adjust (server/engine/cli.ts)', () => {
  it('exit 0 and a human report with the caution line', () => {
    const r = run(good)
    expect(r.err).toBe('')
    expect(r.code).toBe(0)
    expect(r.out).toContain('must be checked against local regulations and licensed practice')
    // the datum in the app's words (one vocabulary for the run setting)
    expect(r.out).toContain('Settings: datum control as stored (fixed where its σ is blank, weighted where given)')
  })
  it('--json prints one object with the contract fields of docs/engine.md', () => {
    const r = run(good, '--json')
    expect(r.code).toBe(0)
    const j = JSON.parse(r.out)
    for (const k of ['converged', 'iterations', 'dof', 'sigma0', 'globalTest', 'stations', 'observations', 'plane', 'height']) expect(j).toHaveProperty(k)
    expect(Object.keys(j.globalTest).sort()).toEqual(['lower', 'passed', 'statistic', 'upper'])
    const c = j.stations.find((s: { name: string }) => s.name === 'C')
    for (const k of ['name', 'east', 'north', 'height', 'sdEast', 'sdNorth', 'sdHeight', 'ellipse', 'fixed']) expect(c).toHaveProperty(k)
    expect(c.ellipse.azimuthDeg).toBeGreaterThanOrEqual(0)
    expect(c.ellipse.azimuthDeg).toBeLessThan(180)
    for (const k of ['line', 'kind', 'at', 'from', 'to', 'residual', 'redundancy', 'w', 'flagged', 'mdb']) expect(j.observations[0]).toHaveProperty(k)
    expect(j.caution).toMatch(/must be checked against local regulations and licensed practice/)
    // whole-file dof = plane + height
    expect(j.dof).toBe(j.plane.dof + j.height.dof)
    // the invented file was generated from C = (1550, 1500) with mm-level noise
    expect(c.east).toBeCloseTo(1550, 1)
    expect(c.north).toBeCloseTo(1500, 1)
  })
  it('exit 2 on bad input, naming line and column', () => {
    const r = run(good.replace('743.303', '74x.303'))
    expect(r.code).toBe(2)
    expect(r.err).toMatch(/line 8, column value/)
  })
  it('exit 3 when the network cannot be solved, naming the cause', () => {
    const r = run(good.replace('control,B,,,1600 1050,m,,,,,,\n', ''))
    expect(r.code).toBe(3)
    expect(r.err).toMatch(/no fixed orientation: hold an azimuth or a second point/)
  })
  it('--profile key=value pairs set the a-priori σ: distance σ² = a² + (b·D)² + ci² + ct² (common practice, see sigma.ts)', () => {
    const r = run(good, '--json', '--profile', 'a=5,b=10,dir=3,zen=4,ci=1,ct=1.5,lev=2')
    expect(r.err).toBe('')
    expect(r.code).toBe(0)
    const o = JSON.parse(r.out).observations.find((x: { line: number }) => x.line === 8)
    const d = 743.303
    expect(o.sigma).toBeCloseTo(Math.sqrt(0.005 ** 2 + (10e-6 * d) ** 2 + 0.001 ** 2 + 0.0015 ** 2), 9)
  })
  it('--profile also takes a JSON file with full field names', () => {
    const file = join(dir, 'profile.json')
    writeFileSync(file, JSON.stringify({ distanceMm: 5, distancePpm: 10, centeringInstrumentMm: 1, centeringTargetMm: 1.5 }))
    const r = run(good, '--json', `--profile=${file}`)
    expect(r.code).toBe(0)
    const o = JSON.parse(r.out).observations.find((x: { line: number }) => x.line === 8)
    expect(o.sigma).toBeCloseTo(Math.sqrt(0.005 ** 2 + (10e-6 * 743.303) ** 2 + 0.001 ** 2 + 0.0015 ** 2), 9)
  })
  it('--profile with an unknown key or a negative value exits 2 naming the field', () => {
    const bad = run(good, '--profile', 'a=2,dirr=3')
    expect(bad.code).toBe(2)
    expect(bad.err).toMatch(/--profile, field dirr: unknown/)
    const neg = run(good, '--profile', 'a=-1')
    expect(neg.code).toBe(2)
    expect(neg.err).toMatch(/--profile, field a: must be a non-negative number/)
  })

  // ---- geodetic options, on the 3D truth network (./truth3d) ---------------------
  const net = mountainNetwork()
  const truth = generate3d(net.stations, net.setups, { proj4: net.def, a: net.a, f: net.f, geoidSeparation: 47.3, refractionK: 0.13 })
  const D = 180 / Math.PI
  /** LandXML 1.2 of the truth network: control A and C (northing easting elevation), one set-up per station */
  const landXml = () => {
    const pts = controlsOf(net.stations, ['A', 'C']).map((c) => `    <CgPoint name="${c.station}" pntSurv="control">${c.north!.toFixed(4)} ${c.east!.toFixed(4)} ${c.height!.toFixed(4)}</CgPoint>`)
    const setups = net.setups.map((su, i) => {
      const rows = truth.observations.filter((o) => o.at === su.at)
      const byTo = new Map<string, typeof rows>()
      for (const o of rows) byTo.set(o.to, [...(byTo.get(o.to) ?? []), o])
      const raws = [...byTo].map(([to, os]) => {
        const v = (k: string) => os.find((o) => o.kind === k)!.value
        return `      <RawObservation horizAngle="${(v('direction') * D).toFixed(10)}" zenithAngle="${(v('zenith') * D).toFixed(10)}" slopeDistance="${v('slope_distance').toFixed(5)}" targetHeight="${os[0].ht!.toFixed(4)}"><TargetPoint pntRef="${to}"/></RawObservation>`
      })
      return `    <InstrumentSetup id="S${i + 1}" stationName="${su.at}" instrumentHeight="${su.hi.toFixed(4)}">\n      <InstrumentPoint pntRef="${su.at}"/>\n${raws.join('\n')}\n    </InstrumentSetup>`
    })
    return `<?xml version="1.0" encoding="UTF-8"?>
<!-- Invented network written by the test from an independent 3D truth. -->
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">
  <Units><Metric linearUnit="meter" angularUnit="decimal degrees" directionUnit="decimal degrees"/></Units>
  <CgPoints>
${pts.join('\n')}
  </CgPoints>
  <Survey>
${setups.join('\n')}
  </Survey>
</LandXML>
`
  }
  const worst = (json: string) => {
    const j = JSON.parse(json)
    let e = 0
    let h = 0
    for (const s of net.stations) {
      const r = j.stations.find((x: { name: string }) => x.name === s.name)
      e = Math.max(e, Math.abs(r.east - s.east), Math.abs(r.north - s.north))
      h = Math.max(h, Math.abs(r.height - s.height))
    }
    return { e, h, j }
  }

  it('reads LandXML 1.2 and, with --crs EPSG:25833 --geoid-separation 47.3 --refraction 0.13, returns the 3D truth (1 mm plane, 2 mm height)', () => {
    const r = runFile('xml', landXml(), '--json', '--crs', 'EPSG:25833', '--geoid-separation', '47.3', '--refraction', '0.13')
    expect(r.err).not.toMatch(/bad input|cannot solve/)
    expect(r.code).toBe(0)
    const w = worst(r.out)
    expect(w.e).toBeLessThan(0.001)
    expect(w.h).toBeLessThan(0.002)
    expect(w.j.gridReduction.geoidSeparationM).toBe(47.3)
    expect(w.j.refraction.k).toBe(0.13)
  })

  it('--proj4 takes a definition; without a CRS the same file misses (local plane) — the option matters', () => {
    const xml = landXml()
    const p = runFile('xml', xml, '--json', '--proj4', net.def, '--geoid-separation=47.3')
    expect(p.code).toBe(0)
    expect(worst(p.out).e).toBeLessThan(0.001)
    const l = runFile('xml', xml, '--json')
    expect(l.code).toBe(0)
    expect(worst(l.out).e).toBeGreaterThan(0.05)
  })

  it('the report states the refraction coefficient and the grid reduction', () => {
    const r = runFile('xml', landXml(), '--crs', 'EPSG:25833', '--geoid-separation', '47.3', '--refraction', '0.10', '--refraction-sigma', '0.02')
    expect(r.code).toBe(0)
    expect(r.out).toContain('Refraction: coefficient k = 0.100 ± 0.020')
    expect(r.out).toMatch(/reduced to grid chords \(arc-to-chord up to \d\.\d\d″/)
  })

  it('bad geodetic options exit 2 naming the option', () => {
    const cases: [string[], RegExp][] = [
      [['--crs', 'EPSG:4326'], /--crs: 'EPSG:4326' is not in the bundled list/],
      [['--refraction', 'x'], /--refraction: 'x' must be a number between -1 and 1/],
      [['--geoid-separation', '5'], /--geoid-separation needs a projected CRS/],
      [['--crs', 'EPSG:25833', '--proj4', net.def], /give one of them/],
      [['--project-height', '300', '--crs', 'EPSG:25833'], /--project-height is for a local plane/],
      [['--units', 'yd'], /--units: 'yd' must be m, ft or usft/],
    ]
    // in-process (the same main the command runs), so six cases do not start six processes
    const file = join(dir, 'options.csv')
    writeFileSync(file, good)
    for (const [args, msg] of cases) {
      let err = ''
      const code = main([file, ...args], { out: () => {}, err: (t) => (err += t) })
      expect(code).toBe(2)
      expect(err).toMatch(msg)
    }
  })

  it('--units ft reads hi and ht of every row in feet: a 5 ft instrument over a 6 ft target on a zenith row shifts the height by −1 ft (regression: angle rows read them as metres)', () => {
    // invented: A benchmark 100 m; B 100 m away, zenith 90° and slope 100 m; hi 5 ft, ht 6 ft on both rows
    const csv = `kind,at,from,to,value,unit,sigma,hi,ht,set,length,note
control,A,,,1000 1000 100,m,,,,,,
control,B,,,1000 1100,m,,,,,,
direction,A,,B,0,deg,,,,,,
slope_distance,A,,B,328.0839895,ft,,5,6,,,
zenith,A,,B,90,deg,,5,6,,,
`
    const r = run(csv, '--json', '--units', 'ft')
    expect(r.err).toBe('')
    const b = JSON.parse(r.out).stations.find((s: { name: string }) => s.name === 'B')
    // ΔH = S·cos z + curvature (1 − k)·D²/2R + hi − ht; D = 100 m, R = 6 371 km, k = 0.13: 0.68 mm (common practice)
    expect(b.height - 100).toBeCloseTo(-0.3048 + (0.87 * 100 * 100) / (2 * 6371000), 4)
  })
})
