// Command line: `npm run adjust -- FILE [--json]` reads a Tiepoint CSV
// observation file (with control rows), adjusts it and prints the report, or
// with --json one result object. Exit codes: 0 solved, 2 bad input (message
// names line and column), 3 the network cannot be solved (message names why).

import { readFileSync } from 'node:fs'
import { adjustNetwork, formatReport } from './index'
import { readObservationCsv } from './io/csv'

function main(argv: string[]): number {
  const args = argv.filter((a) => a !== '--json')
  const json = argv.includes('--json')
  if (args.length !== 1 || args[0].startsWith('-')) {
    process.stderr.write('usage: npm run adjust -- FILE [--json]\n')
    return 2
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
  const outcome = adjustNetwork({ controls: read.controls, observations: read.observations })
  if (!outcome.ok) {
    process.stderr.write(`${outcome.code === 'input' ? 'bad input' : 'cannot solve'}: ${outcome.reason}\n`)
    return outcome.code === 'input' ? 2 : 3
  }
  process.stdout.write(json ? `${JSON.stringify(outcome.result, null, 2)}\n` : formatReport(outcome.result))
  return 0
}

process.exitCode = main(process.argv.slice(2))
