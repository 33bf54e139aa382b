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
// Run: npx tsx tests/bench/engine.ts [--quick] [--dense] [--sizes 1000,2000]
//   --quick  1,000 and 2,000 stations only
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
  for (const stations of sizes) {
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
      console.log(`${stations} stations: ${line || child.stderr?.slice(0, 400) || `exit ${child.status}`}`)
      continue
    }
    points.push([r.stations, r.total, r.cpu])
    console.log(
      [f(r.stations, 8), f(r.rows, 6), f(r.unknowns, 8), f(r.iterations, 2), f(r.approx, 10), f(r.ordering, 12), f(r.factor, 10), f(r.stats, 9), f(r.total - r.approx - r.factor - r.stats, 9), f(r.total, 9), f(r.cpu, 7), f(r.rssMb, 12)].join(' '),
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
  }
}
