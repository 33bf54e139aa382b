// Generates the demo observation files for an invented project: the control
// network of the "Harrow Creek footbridge" site, a creek crossing in a local
// plane system (metres, E 1000–2500, N 5000–6500, heights 40–90 m). Nothing here
// is real: the stations, the terrain and every measurement are made up.
//
//   npx tsx server/db/demo/generate.ts
//
// writes, next to this file:
//   demo-network.csv  Tiepoint CSV: 2 fixed control points, 1 benchmark,
//                     direction sets, slope distances with zeniths, a few
//                     horizontal distances and a levelling loop
//   demo-network.xml  LandXML 1.2 with the control points and the first set-ups
//   blunder.json      where the one deliberate blunder sits (for tests)
//
// Output is deterministic (seeded PRNG), so the committed files can be checked
// against a fresh run.
//
// Noise matches the engine's default instrument profile (server/engine/sigma.ts:
// 3″ directions, 5″ zeniths, 2 mm + 2 ppm distances, 1 mm centering of
// instrument and target), so rows with a blank sigma are weighted as they were
// simulated. Levelling rows carry their own sigma, 2 mm/√km.
//
// The measurements are made in 3D, not with the engine's reductions: the local
// plane, at the project height H₀ = 65 m, is wrapped onto the sphere of radius
// R + H₀, R = 6 371 km (common practice), around the site's centre (azimuthal
// equidistant: arc length at H₀ = plane distance), every
// mark stands at its height along the radius, the instrument and target points
// hi and ht above it. Slope distances are the chords between those points;
// directions the azimuths in the instrument's horizon (minus the set's
// orientation); zenith angles the angle from the instrument's vertical, less
// the refraction angle k·S/(2R) with k = 0.13 (common practice); horizontal
// distances the arc between the marks at their mean height (what the file
// format says a horizontal distance is).
//
// The blunder: one direction is read 40″ wrong. Its line is written to
// blunder.json and printed; the CSV's header only says a blunder exists.

import { writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'

const SEED = 20260302
const BLUNDER_ARCSEC = 40
const DIRECTION_ARCSEC = 3
const ZENITH_ARCSEC = 5
const DISTANCE_MM = 2
const DISTANCE_PPM = 2
const CENTERING_MM = 1
const LEVELLING_MM_PER_SQRT_KM = 2
const RHO = 180 / Math.PI
const EARTH_RADIUS_M = 6_371_000
const REFRACTION_K = 0.13
/** the project height of the demo site (its mean ground height): the plane lies there, and the seed sets it */
export const DEMO_PROJECT_HEIGHT_M = 65

// mulberry32: a small, well-known 32-bit generator; enough for demo noise (both demo generators use it).
export function prng(seed: number) {
  let a = seed >>> 0
  const uniform = () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  // Box–Muller; u1 is kept away from 0 so log() stays finite.
  const normal = () => {
    const u1 = Math.max(uniform(), 1e-12)
    return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * uniform())
  }
  return { uniform, normal }
}

interface Station {
  name: string
  e: number
  n: number
  h: number
  i: number
  j: number
}


/** Builds the demo files in memory; deterministic for a given SEED. */
export function buildDemo() {
  const rnd = prng(SEED)

  // 5 × 5 jittered grid, 320 m apart. The creek runs north–south near E 1750:
  // the terrain falls towards it from both banks.
  function terrain(e: number, n: number): number {
    const fromCreek = Math.abs(e - 1750 - 0.08 * (n - 5750))
    return 42 + Math.min(44, fromCreek * 0.06) + 4 * Math.sin(n / 230)
  }

  const NAMES: Record<string, string> = { '0,0': 'CP1', '4,4': 'CP2', '1,2': 'BM1' }
  const stations: Station[] = []
  let k = 0
  for (let i = 0; i < 5; i++) {
    for (let j = 0; j < 5; j++) {
      const e = 1110 + 320 * i + (rnd.uniform() - 0.5) * 140
      const n = 5110 + 320 * j + (rnd.uniform() - 0.5) * 140
      const name = NAMES[`${i},${j}`] ?? `KF${String(++k).padStart(2, '0')}`
      stations.push({ name, e, n, h: terrain(e, n) + (rnd.uniform() - 0.5) * 2, i, j })
    }
  }
  const at = (i: number, j: number) => stations.find((s) => s.i === i && s.j === j)!
  const byName = (name: string) => stations.find((s) => s.name === name)!

  const SETUPS = [
    [0, 0], [0, 2], [2, 0], [1, 1], [2, 2], [1, 3], [3, 1], [2, 4], [4, 2], [3, 3], [4, 4],
  ].map(([i, j]) => at(i!, j!))

  const hz = (a: Station, b: Station) => Math.hypot(b.e - a.e, b.n - a.n)
  const wrap = (x: number) => ((x % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)

  function dms(rad: number): string {
    // Rounded to 0.1″ in integer tenths first, so 59.96″ carries correctly.
    let t = Math.round(wrap(rad) * RHO * 36000)
    if (t >= 360 * 36000) t -= 360 * 36000
    const d = Math.floor(t / 36000)
    const m = Math.floor((t - d * 36000) / 600)
    const s = (t - d * 36000 - m * 600) / 10
    return `${d} ${String(m).padStart(2, '0')} ${s.toFixed(1).padStart(4, '0')}`
  }

  const centering = (CENTERING_MM / 1000) ** 2 * 2
  const sigmaDirection = (d: number) => Math.sqrt((DIRECTION_ARCSEC / 3600 / RHO) ** 2 + centering / (d * d))
  const sigmaDistance = (d: number) => Math.sqrt((DISTANCE_MM / 1000) ** 2 + (DISTANCE_PPM * 1e-6 * d) ** 2 + centering)

  // 3D: the plane around the site's centre wrapped onto the sphere (see the header)
  const E0 = 1750
  const N0 = 5750
  const up = (st: Station) => {
    const de = st.e - E0
    const dn = st.n - N0
    const psi = Math.hypot(de, dn) / (EARTH_RADIUS_M + DEMO_PROJECT_HEIGHT_M)
    const th = Math.atan2(de, dn)
    return [Math.sin(psi) * Math.sin(th), Math.sin(psi) * Math.cos(th), Math.cos(psi)]
  }
  const point = (st: Station, above: number) => up(st).map((c) => c * (EARTH_RADIUS_M + st.h + above))
  const dot = (a: number[], b: number[]) => a[0]! * b[0]! + a[1]! * b[1]! + a[2]! * b[2]!
  /** slope distance, horizon azimuth and geometric zenith from instrument point to target point */
  const measure3d = (a: Station, hiA: number, b: Station, htB: number) => {
    const p = point(a, hiA)
    const q = point(b, htB)
    const d = [q[0]! - p[0]!, q[1]! - p[1]!, q[2]! - p[2]!]
    const S = Math.hypot(d[0]!, d[1]!, d[2]!)
    const u = up(a)
    // local north: the centre's north (0, 1, 0) projected into the horizon; east = north × up
    const y = [0, 1, 0]
    const yu = dot(y, u)
    const nr = [y[0]! - yu * u[0]!, y[1]! - yu * u[1]!, y[2]! - yu * u[2]!]
    const nl = Math.hypot(nr[0]!, nr[1]!, nr[2]!)
    const north = nr.map((c) => c / nl)
    const east = [north[1]! * u[2]! - north[2]! * u[1]!, north[2]! * u[0]! - north[0]! * u[2]!, north[0]! * u[1]! - north[1]! * u[0]!]
    return { S, az: Math.atan2(dot(d, east), dot(d, north)), zenith: Math.acos(dot(d, u) / S) }
  }
  /** arc between the marks at their mean height */
  const arcAtMeanHeight = (a: Station, b: Station) => Math.acos(Math.min(1, dot(up(a), up(b)))) * (EARTH_RADIUS_M + (a.h + b.h) / 2)

  const lines: string[] = []
  const xmlSetups: string[] = []
  const push = (row: Array<string | number>) => lines.push(row.join(','))

  lines.push(
    '# Tiepoint demo network: Harrow Creek footbridge control (invented site and data).',
    '# Local plane system, metres. CP1 and CP2 are held fixed; BM1 is the height benchmark.',
    '# One observation in this file is a deliberate blunder. Adjust, read the residuals, and find it.',
    'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note',
  )
  const fix = (s: Station) => `${s.e.toFixed(3)} ${s.n.toFixed(3)}`
  push(['control', 'CP1', '', '', fix(byName('CP1')), 'm', '', '', '', '', '', 'fixed: south-west pillar'])
  push(['control', 'CP2', '', '', fix(byName('CP2')), 'm', '', '', '', '', '', 'fixed: north-east pillar'])
  push(['control', 'BM1', '', '', byName('BM1').h.toFixed(4), 'm', '', '', '', '', '', 'benchmark on the west abutment'])

  let blunder: { line: number; kind: string; at: string; to: string; offsetArcsec: number } | null = null
  const seenBy = new Map<string, Set<string>>()
  const XML_SETUPS = 4

  SETUPS.forEach((st, setupIndex) => {
    const targets = stations
      .filter((s) => s !== st && hz(st, s) < 700)
      .sort((a, b) => hz(st, a) - hz(st, b))
      .slice(0, 9)
    // The two control pillars see each other across the site: each set-up on
    // one starts its set with the other as reference object.
    const other = st.name === 'CP1' ? byName('CP2') : st.name === 'CP2' ? byName('CP1') : null
    if (other) targets.unshift(other)
    const hi = 1.45 + Math.round(rnd.uniform() * 200) / 1000
    const omega = rnd.uniform() * 2 * Math.PI
    const set = `${st.name}-R1`
    lines.push(`# set-up ${st.name}, instrument height ${hi.toFixed(3)} m`)
    const xmlObs: string[] = []
    const heights = new Map<string, number>()
    for (const t of targets) heights.set(t.name, 1.3 + Math.round(rnd.uniform() * 700) / 1000)

    for (const t of targets) {
      const d = hz(st, t)
      let r = measure3d(st, hi, t, heights.get(t.name)!).az - omega + rnd.normal() * sigmaDirection(d)
      // The blunder goes on the fifth set-up, to a target seen from three or
      // more set-ups, so redundancy is high enough to find it.
      const isBlunder = blunder === null && setupIndex === 4 && t.i === 3 && t.j === 2
      if (isBlunder) r += BLUNDER_ARCSEC / 3600 / RHO
      push(['direction', st.name, '', t.name, dms(r), 'dms', '', '', '', set, '', ''])
      if (isBlunder) blunder = { line: lines.length, kind: 'direction', at: st.name, to: t.name, offsetArcsec: BLUNDER_ARCSEC }
      if (!seenBy.has(t.name)) seenBy.set(t.name, new Set())
      seenBy.get(t.name)!.add(st.name)
      xmlObs.push(`horizAngle="${((wrap(r) * RHO).toFixed(7))}"`)
    }
    targets.forEach((t, idx) => {
      const ht = heights.get(t.name)!
      const m = measure3d(st, hi, t, ht)
      const slope = m.S
      // the line of sight bends towards the ground: the target is seen higher by k·S/(2R)
      const z = m.zenith - (REFRACTION_K * slope) / (2 * EARTH_RADIUS_M) + rnd.normal() * (ZENITH_ARCSEC / 3600 / RHO)
      // Some lines to other set-up stations are measured as horizontal
      // distances (reduced in the instrument); the rest as slope distance and
      // zenith, so every station also gets a trigonometric height.
      if (idx % 3 === 2 && SETUPS.includes(t)) {
        const d = arcAtMeanHeight(st, t)
        const hd = d + rnd.normal() * sigmaDistance(d)
        push(['horizontal_distance', st.name, '', t.name, hd.toFixed(4), 'm', '', '', '', '', '', ''])
        xmlObs[idx] += ` horizDistance="${hd.toFixed(4)}" targetHeight="${ht.toFixed(3)}"`
      } else {
        const sd = slope + rnd.normal() * sigmaDistance(slope)
        push(['zenith', st.name, '', t.name, dms(z), 'dms', '', hi.toFixed(3), ht.toFixed(3), '', '', ''])
        push(['slope_distance', st.name, '', t.name, sd.toFixed(4), 'm', '', hi.toFixed(3), ht.toFixed(3), '', '', ''])
        xmlObs[idx] += ` zenithAngle="${(wrap(z) * RHO).toFixed(7)}" slopeDistance="${sd.toFixed(4)}" targetHeight="${ht.toFixed(3)}"`
      }
    })
    if (setupIndex < XML_SETUPS) {
      const raw = targets
        .map((t, idx) => `      <RawObservation ${xmlObs[idx]}>\n        <TargetPoint pntRef="${t.name}"/>\n      </RawObservation>`)
        .join('\n')
      xmlSetups.push(
        `    <InstrumentSetup id="${set}" stationName="${st.name}" instrumentHeight="${hi.toFixed(3)}">\n      <InstrumentPoint pntRef="${st.name}"/>\n${raw}\n    </InstrumentSetup>`,
      )
    }
  })

  // Levelling loop from the benchmark over five stations and back; a run of
  // length L km has σ = 2 mm·√L, written in the sigma column.
  const loop = [[1, 2], [2, 2], [3, 2], [3, 3], [2, 3], [1, 3], [1, 2]].map(([i, j]) => at(i!, j!))
  lines.push('# levelling loop, digital level, lengths in km')
  for (let q = 0; q + 1 < loop.length; q++) {
    const a = loop[q]!
    const b = loop[q + 1]!
    const lengthKm = Math.round(hz(a, b) * 1.15) / 1000
    const sigmaMm = LEVELLING_MM_PER_SQRT_KM * Math.sqrt(lengthKm)
    const dh = b.h - a.h + (rnd.normal() * sigmaMm) / 1000
    push(['height_difference', a.name, '', b.name, dh.toFixed(5), 'm', sigmaMm.toFixed(2), '', '', '', lengthKm.toFixed(3), ''])
  }

  // Every station must be reachable: at least two set-ups see it (intersection),
  // and a zenith reaches it (a height).
  for (const s of stations) {
    const setups = seenBy.get(s.name)?.size ?? 0
    if (setups < 2 && !SETUPS.includes(s)) throw new Error(`station ${s.name} is seen from ${setups} set-up(s) only`)
    if (!SETUPS.includes(s) && !lines.some((l) => l.startsWith('zenith,') && l.split(',')[3] === s.name)) {
      throw new Error(`station ${s.name} gets no height`)
    }
  }
  if (!blunder) throw new Error('the blunder was not placed')
  const placed = blunder as { line: number; kind: string; at: string; to: string; offsetArcsec: number }
  if ((seenBy.get(placed.to)?.size ?? 0) < 3) throw new Error('the blunder target is seen from fewer than three set-ups')

  const control = ['CP1', 'CP2']
    .map((n) => byName(n))
    .map((s) => `    <CgPoint name="${s.name}" pntSurv="control">${s.n.toFixed(3)} ${s.e.toFixed(3)}</CgPoint>`)
  const xml = `<?xml version="1.0" encoding="UTF-8"?>
<!-- Tiepoint demo: Harrow Creek footbridge control, first ${XML_SETUPS} set-ups (invented site and data). -->
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2" date="2026-03-02" time="08:00:00">
  <Units>
    <Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter" angularUnit="decimal degrees" directionUnit="decimal degrees"/>
  </Units>
  <Project name="Harrow Creek footbridge"/>
  <CgPoints>
${control.join('\n')}
  </CgPoints>
  <Survey>
${xmlSetups.join('\n')}
  </Survey>
</LandXML>
`
  const blunderJson = JSON.stringify({ file: 'demo-network.csv', ...placed, xmlIncludesBlunder: false, seed: SEED }, null, 2) + '\n'
  return { csv: lines.join('\n') + '\n', xml, blunderJson, blunder: placed, lineCount: lines.length }
}

// Written only when run as a script, so tests can import buildDemo().
if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const demo = buildDemo()
  const here = dirname(fileURLToPath(import.meta.url))
  writeFileSync(join(here, 'demo-network.csv'), demo.csv)
  writeFileSync(join(here, 'demo-network.xml'), demo.xml)
  writeFileSync(join(here, 'blunder.json'), demo.blunderJson)
  const b = demo.blunder
  console.log(`demo-network.csv: ${demo.lineCount} lines; blunder on line ${b.line} (${b.kind} ${b.at} → ${b.to}, ${b.offsetArcsec}″)`)
}
