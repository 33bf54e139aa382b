// Command line: `npm run adjust -- FILE [--json] [--profile PROFILE]` reads a
// Tiepoint CSV observation file (with control rows), adjusts it and prints the
// report, or with --json one result object. PROFILE is the instrument profile as
// key=value pairs ("a=2,b=2,dir=3,zen=4,ci=1,ct=1.5,lev=2") or a JSON file (see
// ./profile). Exit codes: 0 solved, 2 bad input (message names line and column,
// or the option and field), 3 the network cannot be solved (message names why).

import { readFileSync } from 'node:fs'
import { adjustNetwork, formatReport } from './index'
import { CAUTION } from './report'
import { readObservationCsv } from './io/csv'
import { parseProfileArg } from './profile'
import type { InstrumentProfile } from './types'

function main(argv: string[]): number {
  const usage = 'usage: npm run adjust -- FILE [--json] [--profile "a=2,b=2,dir=3,zen=4,ci=1,ct=1.5,lev=2" | --profile FILE.json]\n'
  const args: string[] = []
  let json = false
  let profileArg: string | null = null
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]
    if (a === '--json') json = true
    else if (a === '--profile' || a.startsWith('--profile=')) {
      const v = a === '--profile' ? argv[++i] : a.slice('--profile='.length)
      if (v === undefined || profileArg !== null) {
        process.stderr.write(v === undefined ? '--profile needs a value\n' : '--profile given twice\n')
        return 2
      }
      profileArg = v
    } else args.push(a)
  }
  if (args.length !== 1 || args[0].startsWith('-')) {
    process.stderr.write(usage)
    return 2
  }
  let profile: InstrumentProfile | undefined
  if (profileArg !== null) {
    const parsed = parseProfileArg(profileArg, (path) => readFileSync(path, 'utf8'))
    if (!parsed.ok) {
      process.stderr.write(`${parsed.message}\n`)
      return 2
    }
    profile = parsed.profile
  }
  let text: string
  try {
    text = readFileSync(args[0], 'utf8')
  } catch (e) {
    process.stderr.write(`cannot read ${args[0]}: ${e instanceof Error ? e.message : String(e)}\n`)
    return 2
  }
  const read = readObservationCsv(text)
  for (const w of read.warnings) process.stderr.write(`warning: line ${w.line}, column ${w.column}: ${w.message}\n`)
  if (!read.ok) {
    for (const e of read.errors) process.stderr.write(`line ${e.line}, column ${e.column}: ${e.message}\n`)
    return 2
  }
  const outcome = adjustNetwork({ controls: read.controls, observations: read.observations, ...(profile ? { profile } : {}) })
  if (!outcome.ok) {
    process.stderr.write(`${outcome.code === 'input' ? 'bad input' : 'cannot solve'}: ${outcome.reason}\n`)
    return outcome.code === 'input' ? 2 : 3
  }
  // the JSON carries the same caution as the printed report: scripts pass results on
  process.stdout.write(json ? `${JSON.stringify({ ...outcome.result, caution: CAUTION }, null, 2)}\n` : formatReport(outcome.result))
  return 0
}

process.exitCode = main(process.argv.slice(2))
