// Engine benchmark: invented perturbed-grid networks (≈ 6 neighbours per station,
// a direction and a distance to each, one direction set per station, 4 fixed
// corners; tests/unit/engine/helpers.ts). For 1,000, 2,000, 5,000 and 10,000
// stations it prints the time per phase — approximations, ordering (symbolic
// analysis, once), factorization (every Gauss–Newton iteration, ordering
// included), statistics (selected inverse, qvv and rᵢ of every observation, w, τ,
// MDB and its effect, absolute ellipses of every station, relative ellipses of
// every connected pair, condition estimate), other (input checks, building the
// model, each iteration's linearization) — the total, the process's CPU time
// and its peak RSS. Each size runs in its own process (so peak RSS is that
// size's) after a small warm-up network. The growth exponent is the least-squares
// slope of log(total) against log(stations).
//
// Targets (issue 12): 10,000 stations < 10 s and < 1 GB on 2 cores; 2,000 < 2 s;
// growth ≤ N^1.4. The machine is shared: wall times depend on its load, which is
// printed with the figures (CPU time is the less disturbed measure).
//
// Run: npx tsx tests/bench/engine.ts [--quick] [--dense] [--sizes 1000,2000] [--repeat 3]
//   --quick  1,000 and 2,000 stations only
//   --repeat k  run each size k times (each in its own process) and print the
//            run with the median CPU time — steadier figures on a loaded machine
//   --dense  the dense path (u×u QR, the oracle) instead — the "before" figures;
//            it needs minutes and gigabytes above 2,000 stations
import { spawnSync } from 'node:child_process'
import { loadavg } from 'node:os'
import { fileURLToPath } from 'node:url'
import { adjustNetworkTimed } from '../../server/engine/adjust'
import { gridNetwork } from '../unit/engine/helpers'

const argv = process.argv
const dense = argv.includes('--dense')
const oneAt = argv.indexOf('--one')
const sizesAt = argv.indexOf('--sizes')
const repeatAt = argv.indexOf('--repeat')
const repeat = repeatAt >= 0 ? Math.max(1, Number(argv[repeatAt + 1]) || 1) : 1
const sizes =
  sizesAt >= 0 ? argv[sizesAt + 1].split(',').map(Number) : argv.includes('--quick') ? [1000, 2000] : [1000, 2000, 5000, 10000]

function runOne(stations: number): string {
  const side = Math.round(Math.sqrt(stations))
  const options = { factorization: dense ? ('dense' as const) : ('sparse' as const) }
  adjustNetworkTimed(gridNetwork(6, 2), {}, options) // warm-up: the JIT is not timed
  const net = gridNetwork(side, 1)
  const cpu0 = process.cpuUsage()
  const t0 = performance.now()
  const { outcome, timings } = adjustNetworkTimed(net, {}, options)
  const total = performance.now() - t0
  const cpu = process.cpuUsage(cpu0)
  if (!outcome.ok) return JSON.stringify({ stations: side * side, failed: outcome.reason })
  const res = outcome.result
  return JSON.stringify({
    stations: side * side,
    rows: res.counts.n,
    unknowns: res.counts.u,
    iterations: res.iterations,
    approx: timings.approximationMs,
    ordering: timings.orderingMs,
    factor: timings.factorizationMs,
    stats: timings.statisticsMs,
    total,
    cpu: (cpu.user + cpu.system) / 1000,
    rssMb: process.resourceUsage().maxRSS / 1024,
    relative: res.relative.length,
  })
}

if (oneAt >= 0) {
  console.log(runOne(Number(argv[oneAt + 1])))
} else {
  const f = (v: number, w: number) => v.toFixed(0).padStart(w)
  console.log(`engine bench (${dense ? 'dense path' : 'sparse path'}), load average ${loadavg().map((x) => x.toFixed(2)).join(' ')} on a shared machine`)
  console.log('stations   rows unknowns it  approx ms  ordering ms  factor ms  stats ms  other ms  total ms  cpu ms  peak RSS MB')
  const self = fileURLToPath(import.meta.url)
  const points: [number, number, number][] = []
  let growth: number | null = null
  const measured = new Map<number, Record<string, number>>()
  for (const stations of sizes) {
    const runs: Record<string, number>[] = []
    let failure = ''
    for (let k = 0; k < repeat; k++) {
      const child = spawnSync(process.execPath, [...process.execArgv, self, '--one', String(stations), ...(dense ? ['--dense'] : [])], {
        encoding: 'utf8',
        maxBuffer: 1 << 20,
      })
      const line = (child.stdout || '').trim().split('\n').pop() ?? ''
      let r: Record<string, number> | null = null
      try {
        r = JSON.parse(line)
      } catch {
        r = null
      }
      if (!r || r.failed !== undefined || r.total === undefined) {
        failure = line || child.stderr?.slice(0, 400) || `exit ${child.status}`
        break
      }
      runs.push(r)
    }
    if (failure) {
      console.log(`${stations} stations: ${failure}`)
      continue
    }
    runs.sort((a, b) => a.cpu - b.cpu)
    const r = runs[(runs.length - 1) >> 1]
    measured.set(stations, r)
    points.push([r.stations, r.total, r.cpu])
    console.log(
      [f(r.stations, 8), f(r.rows, 6), f(r.unknowns, 8), f(r.iterations, 2), f(r.approx, 10), f(r.ordering, 12), f(r.factor, 10), f(r.stats, 9), f(r.total - r.approx - r.factor - r.stats, 9), f(r.total, 9), f(r.cpu, 7), f(r.rssMb, 12)].join(' ') +
        (repeat > 1 ? `   (median CPU of ${repeat}; CPU ${runs.map((x) => x.cpu.toFixed(0)).join(', ')})` : ''),
    )
  }
  if (points.length >= 2) {
    // least-squares slope of log(time) on log(stations)
    const slope = (k: 1 | 2) => {
      const xs = points.map((p) => Math.log(p[0]))
      const ys = points.map((p) => Math.log(p[k]))
      const mx = xs.reduce((a, b) => a + b, 0) / xs.length
      const my = ys.reduce((a, b) => a + b, 0) / ys.length
      let sxy = 0
      let sxx = 0
      xs.forEach((x, i) => ((sxy += (x - mx) * (ys[i] - my)), (sxx += (x - mx) ** 2)))
      return sxy / sxx
    }
    console.log(`growth: total ∝ N^${slope(1).toFixed(2)}, cpu ∝ N^${slope(2).toFixed(2)} (target ≤ N^1.4); load average now ${loadavg().map((x) => x.toFixed(2)).join(' ')}`)
    growth = slope(1)
  }
  // against the targets of issue 12: ratio = measured / target (below 1 = met)
  const ratio = (v: number, t: number) => `${(v / t).toFixed(2)}${v < t ? ' (met)' : ' (not met)'}`
  const lines: string[] = []
  for (const [n, limit] of [[10000, 10000], [2000, 2000]] as const) {
    const r = measured.get(n)
    if (r) lines.push(`${r.stations} stations < ${limit / 1000} s: wall ${(r.total / 1000).toFixed(2)} s → ${ratio(r.total, limit)}, CPU ${(r.cpu / 1000).toFixed(2)} s → ${ratio(r.cpu, limit)}`)
  }
  const big = measured.get(10000)
  if (big) lines.push(`10000 stations peak RSS < 1024 MB: ${big.rssMb.toFixed(0)} MB → ${ratio(big.rssMb, 1024)}`)
  if (growth !== null) lines.push(`growth ≤ N^1.4: N^${growth.toFixed(2)} → ${ratio(growth, 1.4)}`)
  if (lines.length) {
    console.log('targets (measured / target; the machine is shared: wall time depends on its load, CPU time less so):')
    for (const l of lines) console.log(`  ${l}`)
  }
}
