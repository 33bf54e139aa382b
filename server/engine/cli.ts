// Command line: `npm run adjust -- FILE [options]` reads a Tiepoint CSV or a
// LandXML 1.2 observation file (with control), adjusts it and prints the
// report, or with --json one result object. Exit codes: 0 solved, 2 bad input
// (message names line and column, or the option and field), 3 the network
// cannot be solved (message names why).
//
// Options carry the same meaning as a project's settings:
//   --json
//   --profile "a=2,b=2,dir=3,zen=4,ci=1,ct=1.5,lev=2" | --profile FILE.json   (./profile)
//   --crs EPSG:<code>            a projected CRS of the bundled list (shared/crs.ts)
//   --proj4 "<definition>"       or any projected CRS by its proj4 definition
//   --geoid-separation METRES    N for the whole network (ellipsoidal = height + N)
//                                (a file with GNSS baselines needs --crs or --proj4, and N:
//                                it is then adjusted as one combined 3D network, ./network3d)
//   --refraction K               coefficient of refraction (default 0.13)
//   --refraction-sigma SK        its σ (default 0.05)
//   --project-height METRES      local plane: reduce ground distances to this height
//   --units m|ft|usft            the unit of hi and ht in a CSV file (default m)
//   --format csv|landxml         default: from the file name (.xml → LandXML)

import { readFileSync } from 'node:fs'
import { findCrs } from '../../shared/crs'
import { adjustNetwork, formatReport } from './index'
import { CAUTION } from './report'
import { readObservationCsv } from './io/csv'
import { readLandXml } from './io/landxml'
import { parseProfileArg } from './profile'
import type { AdjustInput, InstrumentProfile } from './types'

const USAGE =
  'usage: npm run adjust -- FILE [--json] [--profile PROFILE] [--crs EPSG:CODE | --proj4 "DEFINITION"] [--geoid-separation M] ' +
  '[--refraction K] [--refraction-sigma SK] [--project-height M] [--units m|ft|usft] [--format csv|landxml]\n'

const VALUED = ['--profile', '--crs', '--proj4', '--geoid-separation', '--refraction', '--refraction-sigma', '--project-height', '--units', '--format'] as const
type Valued = (typeof VALUED)[number]

export function main(argv: string[], io: { out: (s: string) => void; err: (s: string) => void } = { out: (s) => process.stdout.write(s), err: (s) => process.stderr.write(s) }): number {
  const args: string[] = []
  const opts = new Map<Valued, string>()
  let json = false
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]
    if (a === '--json') {
      json = true
      continue
    }
    const name = VALUED.find((o) => a === o || a.startsWith(`${o}=`))
    if (name) {
      const v = a === name ? argv[++i] : a.slice(name.length + 1)
      if (v === undefined) return bad(io, `${name} needs a value`)
      if (opts.has(name)) return bad(io, `${name} given twice`)
      opts.set(name, v)
    } else if (a.startsWith('--')) return bad(io, `unknown option ${a}\n${USAGE}`)
    else args.push(a)
  }
  if (args.length !== 1) {
    io.err(USAGE)
    return 2
  }
  const num = (name: Valued, lo: number, hi: number): number | undefined | null => {
    const t = opts.get(name)
    if (t === undefined) return undefined
    const v = Number(t)
    if (t.trim() === '' || !Number.isFinite(v) || v < lo || v > hi) {
      io.err(`${name}: '${t}' must be a number between ${lo} and ${hi}\n`)
      return null
    }
    return v
  }
  const geoid = num('--geoid-separation', -200, 200)
  const k = num('--refraction', -1, 1)
  const sk = num('--refraction-sigma', 0, 1)
  const h0 = num('--project-height', -1000, 9000)
  if (geoid === null || k === null || sk === null || h0 === null) return 2

  let proj4: string | undefined
  if (opts.has('--crs') && opts.has('--proj4')) return bad(io, '--crs and --proj4: give one of them')
  if (opts.has('--crs')) {
    const code = opts.get('--crs')!.trim()
    const entry = findCrs(code)
    if (!entry) return bad(io, `--crs: '${code}' is not in the bundled list (EPSG:326zz, EPSG:327zz, EPSG:269zz, EPSG:258zz and a few national grids); give --proj4 "<definition>" instead`)
    proj4 = entry.proj4
  } else if (opts.has('--proj4')) proj4 = opts.get('--proj4')!
  if (geoid !== undefined && proj4 === undefined) return bad(io, '--geoid-separation needs a projected CRS (--crs or --proj4)')
  if (h0 !== undefined && proj4 !== undefined) return bad(io, '--project-height is for a local plane; with --crs or --proj4 distances go to the grid')

  const units = opts.get('--units') ?? 'm'
  if (units !== 'm' && units !== 'ft' && units !== 'usft') return bad(io, `--units: '${units}' must be m, ft or usft`)
  const format = opts.get('--format') ?? (/\.(xml|landxml)$/i.test(args[0]) ? 'landxml' : 'csv')
  if (format !== 'csv' && format !== 'landxml') return bad(io, `--format: '${format}' must be csv or landxml`)

  let profile: InstrumentProfile | undefined
  if (opts.has('--profile')) {
    const parsed = parseProfileArg(opts.get('--profile')!, (path) => readFileSync(path, 'utf8'))
    if (!parsed.ok) return bad(io, parsed.message)
    profile = parsed.profile
  }
  let text: string
  try {
    text = readFileSync(args[0], 'utf8')
  } catch (e) {
    return bad(io, `cannot read ${args[0]}: ${e instanceof Error ? e.message : String(e)}`)
  }
  const read = format === 'landxml' ? readLandXml(text) : readObservationCsv(text, { heightUnit: units })
  for (const w of read.warnings) io.err(`warning: line ${w.line}, column ${w.column}: ${w.message}\n`)
  if (!read.ok) {
    for (const e of read.errors) io.err(`line ${e.line}, column ${e.column}: ${e.message}\n`)
    return 2
  }
  const input: AdjustInput = {
    controls: read.controls,
    observations: read.observations,
    ...(profile ? { profile } : {}),
    ...(proj4 !== undefined ? { projection: { proj4, ...(geoid !== undefined ? { geoidSeparationM: geoid } : {}) } } : {}),
    ...(k !== undefined || sk !== undefined ? { refraction: { k: k ?? 0.13, sigmaK: sk ?? 0.05 } } : {}),
    ...(h0 !== undefined ? { projectHeightM: h0 } : {}),
  }
  const outcome = adjustNetwork(input)
  if (!outcome.ok) {
    io.err(`${outcome.code === 'input' ? 'bad input' : 'cannot solve'}: ${outcome.reason}\n`)
    return outcome.code === 'input' ? 2 : 3
  }
  // the JSON carries the same caution as the printed report: scripts pass results on
  io.out(json ? `${JSON.stringify({ ...outcome.result, caution: CAUTION }, null, 2)}\n` : formatReport(outcome.result))
  return 0
}

function bad(io: { err: (s: string) => void }, message: string): number {
  io.err(`${message}\n`)
  return 2
}

if (process.argv[1] && /cli\.ts$/.test(process.argv[1])) process.exitCode = main(process.argv.slice(2))
