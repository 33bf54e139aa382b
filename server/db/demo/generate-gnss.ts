// Generates the second demo observation file: an invented GNSS-controlled
// network tied to a total-station traverse, "Wenlow Sound outfall" — three
// GNSS pillars on a shore (W01–W03) and a four-station traverse (T1–T4) run
// between two of them, in ETRS89 / UTM zone 33N (EPSG:25833) with one geoid
// separation N for the site. Nothing here is real: the site, the marks and
// every measurement are made up.
//
//   TIEPOINT_WRITE_DEMO=1 npx vite-node server/db/demo/generate-gnss.ts
//
// writes demo-gnss.csv next to this file. Output is deterministic (seeded
// PRNG), so the committed file can be checked against a fresh run.
//
// The measurements are made in 3D by the independent truth generator
// (tests/unit/engine/truth3d.ts: proj4 for the projection and the
// Earth-centred coordinates, GeographicLib for the geodesics), never with the
// engine's reductions:
// - GNSS vectors are the differences of the marks' Earth-centred positions
//   (ellipsoidal height h = H + N), mark to mark. Their covariance is made in
//   the local east/north/up of the first mark — 2.5 mm horizontal, 6 mm up
//   (common practice for short static baselines) — and turned into the
//   Earth-centred frame, C = Rᵀ D R, which gives each vector its σX σY σZ and
//   ρXY ρXZ ρYZ. The noise is drawn in east/north/up and turned the same way.
// - Directions, slope distances and zenith angles of the traverse come from
//   truth3d's generate3d (k = 0.13, the project's refraction coefficient),
//   with noise at the σ written on each row.

import { writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import proj4 from 'proj4'
import { ecefOfStations, generate3d, type TruthSetup, type TruthStation } from '../../../tests/unit/engine/truth3d'
import { prng } from './generate'
import { GNSS_DEMO } from './gnss-project'


const SEED = 20261204
const PROJ = '+proj=utm +zone=33 +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=m +no_defs'
const GRS80 = { a: 6378137, f: 1 / 298.257222101 }
const D2R = Math.PI / 180
const ENU_SIGMA_M = [0.0025, 0.0025, 0.006]
const DIRECTION_ARCSEC = 2
const ZENITH_ARCSEC = 4
const DISTANCE_M = 0.002

/** Rows of R: east, north, up unit vectors in the Earth-centred frame at longitude, latitude (degrees). */
function enuRows(lonDeg: number, latDeg: number): number[][] {
  const l = lonDeg * D2R
  const p = latDeg * D2R
  return [
    [-Math.sin(l), Math.cos(l), 0],
    [-Math.sin(p) * Math.cos(l), -Math.sin(p) * Math.sin(l), Math.cos(p)],
    [Math.cos(p) * Math.cos(l), Math.cos(p) * Math.sin(l), Math.sin(p)],
  ]
}

const dms = (rad: number) => {
  let s = Math.round((((rad / D2R) % 360) + 360) % 360 * 36000) / 10
  const d = Math.floor(s / 3600)
  s -= d * 3600
  const m = Math.floor(s / 60)
  s -= m * 60
  return `${d} ${String(m).padStart(2, '0')} ${s.toFixed(1).padStart(4, '0')}`
}

/** The invented true positions (grid E, N and height H) the file was measured from. */
export function gnssDemoStations(): TruthStation[] {
  const [e0, n0] = proj4(PROJ).forward([14.62, 54.41])
  const rel: [string, number, number, number][] = [
    ['W01', 0, 0, 12.418],
    ['W02', 2350, 1480, 31.902],
    ['W03', 3920, -610, 8.655],
    ['T1', 420, -180, 9.731],
    ['T2', 1260, -520, 6.204],
    ['T3', 2210, -760, 5.388],
    ['T4', 3140, -880, 7.915],
  ]
  return rel.map(([name, de, dn, h]) => ({ name, east: Math.round((e0! + de) * 1000) / 1000, north: Math.round((n0! + dn) * 1000) / 1000, height: h }))
}

export function generateGnssDemo(): string {
  const { normal } = prng(SEED)
  const st = gnssDemoStations()
  const opt = { proj4: PROJ, ...GRS80, geoidSeparation: GNSS_DEMO.geoidSeparationM, refractionK: 0.13, sigma: { distance: DISTANCE_M, direction: (DIRECTION_ARCSEC / 3600) * D2R, zenith: (ZENITH_ARCSEC / 3600) * D2R } }

  const lines: string[] = [
    `# ${GNSS_DEMO.name} — invented demo data, ETRS89 / UTM zone 33N (EPSG:25833), metres; geoid separation N = ${GNSS_DEMO.geoidSeparationM} m.`,
    '# GNSS vectors: ΔX ΔY ΔZ in metres (Earth-centred, mark to mark), σ in mm, correlations ρXY ρXZ ρYZ.',
    '# Made by server/db/demo/generate-gnss.ts with the independent 3D truth generator; noise at the σ written on each row.',
    'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note,correlation',
  ]
  const w01 = st[0]!
  lines.push(`control,W01,,,${w01.east.toFixed(3)} ${w01.north.toFixed(3)} ${w01.height.toFixed(3)},m,,,,,,GNSS pillar held fixed,`)

  const xyz = ecefOfStations(st, { proj4: PROJ, geoidSeparation: GNSS_DEMO.geoidSeparationM })
  const vectors: [string, string][] = [['W01', 'W02'], ['W01', 'W03'], ['W02', 'W03'], ['W01', 'T1'], ['W03', 'T4'], ['W02', 'T3']]
  for (const [a, b] of vectors) {
    const pa = xyz.get(a)!
    const pb = xyz.get(b)!
    const s = st.find((x) => x.name === a)!
    const [lon, lat] = proj4(PROJ).inverse([s.east, s.north])
    const R = enuRows(lon!, lat!)
    // C = Rᵀ D R (D the ENU variances); noise n = Rᵀ (σ ∘ z)
    const C = [0, 1, 2].map((i) => [0, 1, 2].map((j) => R.reduce((sum, row, k) => sum + row[i]! * ENU_SIGMA_M[k]! ** 2 * row[j]!, 0)))
    const z = ENU_SIGMA_M.map((sg) => sg * normal())
    const noise = [0, 1, 2].map((i) => R.reduce((sum, row, k) => sum + row[i]! * z[k]!, 0))
    const d = [0, 1, 2].map((i) => pb[i]! - pa[i]! + noise[i]!)
    const sd = [0, 1, 2].map((i) => Math.sqrt(C[i]![i]!))
    const rho = [[0, 1], [0, 2], [1, 2]].map(([i, j]) => C[i!]![j!]! / (sd[i!]! * sd[j!]!))
    lines.push(`gnss_baseline,${a},,${b},${d.map((x) => x.toFixed(4)).join(' ')},m,${sd.map((x) => (x * 1000).toFixed(2)).join(' ')},,,,,static session,${rho.map((x) => x.toFixed(4)).join(' ')}`)
  }

  // the traverse: W01 → T1 → T2 → T3 → T4 → W03, each set-up seeing back and ahead
  const chain = ['W01', 'T1', 'T2', 'T3', 'T4', 'W03']
  const setups: TruthSetup[] = chain.slice(1, -1).map((at, i) => ({
    at, hi: Math.round((1.48 + 0.031 * i) * 1000) / 1000, orientation: ((23 + 71 * i) % 360) * D2R,
    targets: [{ to: chain[i]!, ht: 1.6 }, { to: chain[i + 2]!, ht: 1.6 }],
  }))
  const truth = generate3d(st, setups, opt)
  for (const o of truth.observations) {
    if (o.kind === 'direction') lines.push(`direction,${o.at},,${o.to},${dms(o.value + opt.sigma.direction * normal())},dms,${DIRECTION_ARCSEC},${o.hi!.toFixed(3)},${o.ht!.toFixed(3)},${o.set},,,`)
    else if (o.kind === 'slope_distance') lines.push(`slope_distance,${o.at},,${o.to},${(o.value + DISTANCE_M * normal()).toFixed(4)},m,${DISTANCE_M * 1000},${o.hi!.toFixed(3)},${o.ht!.toFixed(3)},,,,`)
    else if (o.kind === 'zenith') lines.push(`zenith,${o.at},,${o.to},${dms(o.value + opt.sigma.zenith * normal())},dms,${ZENITH_ARCSEC},${o.hi!.toFixed(3)},${o.ht!.toFixed(3)},,,,`)
  }
  return lines.join('\n') + '\n'
}

// run as a script: vite-node loads geographiclib-geodesic's CommonJS export the
// way the tests do (tsx does not); it does not pass the file in argv, so an
// environment flag says "write"
if (process.env.TIEPOINT_WRITE_DEMO === '1') {
  const out = join(dirname(fileURLToPath(import.meta.url)), GNSS_DEMO.file)
  writeFileSync(out, generateGnssDemo())
  console.log(`wrote ${out}`)
}
