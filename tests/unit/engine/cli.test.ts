// The adjust command: exit codes 0 (solved), 2 (bad input, message names line
// and column), 3 (unsolvable, message names the cause), and the JSON contract.
import { spawnSync } from 'node:child_process'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'

const root = join(__dirname, '../../..')
const dir = mkdtempSync(join(tmpdir(), 'tiepoint-cli-'))

function run(csv: string, ...args: string[]) {
  const file = join(dir, `net-${Math.random().toString(36).slice(2)}.csv`)
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
})
