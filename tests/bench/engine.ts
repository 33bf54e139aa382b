// Engine benchmark: invented perturbed-grid networks (≈ 6 neighbours per station,
// a direction and a distance to each, 4 fixed corners). Prints size, time per
// phase, peak RSS, and our pivoted QR against ml-matrix QrDecomposition on the
// same whitened matrix. Targets: 300 stations < 5 s and < 500 MB; own QR ≥ 3×
// faster than ml-matrix. Run: npx tsx tests/bench/engine.ts [--quick]
import { Matrix, QrDecomposition } from 'ml-matrix'
import { adjustNetworkTimed } from '../../server/engine/adjust'
import { compressRows, factorize } from '../../server/engine/qr'
import { gridNetwork } from '../unit/engine/helpers'

const quick = process.argv.includes('--quick')
const sizes = quick ? [100] : [100, 300, 1000]
let peakRss = process.memoryUsage().rss
const sample = setInterval(() => {
  peakRss = Math.max(peakRss, process.memoryUsage().rss)
}, 20)

/** The whitened design of one iteration, rebuilt here for the ml-matrix comparison. */
function whitenedDirectionDistanceMatrix(side: number): { a: Float64Array; m: number; n: number } {
  const net = gridNetwork(side, 1)
  const names = [...net.truth.keys()]
  const idx = new Map(names.map((s, i) => [s, i]))
  const sets = new Map<string, number>()
  for (const o of net.observations) if (o.kind === 'direction' && !sets.has(o.at)) sets.set(o.at, sets.size)
  const n = sets.size + 2 * names.length
  const m = net.observations.length
  const a = new Float64Array(m * n)
  net.observations.forEach((o, t) => {
    const p = net.truth.get(o.at)!
    const q = net.truth.get(o.to)!
    const de = q[0] - p[0]
    const dn = q[1] - p[1]
    const d2 = de * de + dn * dn
    const d = Math.sqrt(d2)
    const i = sets.size + 2 * idx.get(o.at)!
    const j = sets.size + 2 * idx.get(o.to)!
    const w = 1 / o.sigma!
    if (o.kind === 'direction') {
      a[sets.get(o.at)! * m + t] = -w
      a[i * m + t] = (-dn / d2) * w
      a[(i + 1) * m + t] = (de / d2) * w
      a[j * m + t] = (dn / d2) * w
      a[(j + 1) * m + t] = (-de / d2) * w
    } else {
      a[i * m + t] = (-de / d) * w
      a[(i + 1) * m + t] = (-dn / d) * w
      a[j * m + t] = (de / d) * w
      a[(j + 1) * m + t] = (dn / d) * w
    }
  })
  return { a, m, n }
}

console.log('stations  rows  unknowns  approx ms  factor ms  stats ms  total ms  peak RSS MB  ownQR ms  ml-matrix QR ms  ratio')
for (const stations of sizes) {
  const side = Math.round(Math.sqrt(stations))
  const net = gridNetwork(side, 1)
  const t0 = performance.now()
  const { outcome, timings } = adjustNetworkTimed(net)
  const total = performance.now() - t0
  if (!outcome.ok) {
    console.log(`${side * side} stations: failed: ${outcome.reason}`)
    continue
  }
  const res = outcome.result
  peakRss = Math.max(peakRss, process.memoryUsage().rss)
  // QR comparison on one iteration's whitened design (all stations as unknowns, so
  // it has the datum defect; both factor the same matrix, only the time is compared)
  const { a, m, n } = whitenedDirectionDistanceMatrix(side)
  const rows: number[][] = []
  for (let i = 0; i < m; i++) rows.push(Array.from({ length: n }, (_, j) => a[j * m + i]))
  // our path: sparse whitened rows (sorted by first unknown) → R₀ → pivoted Householder QR
  const sparse = rows
    .map((row) => {
      const cols: number[] = []
      const values: number[] = []
      row.forEach((v, j) => {
        if (v !== 0) {
          cols.push(j)
          values.push(v)
        }
      })
      return { cols, values, rhs: 0 }
    })
    .sort((p, q) => p.cols[0] - q.cols[0])
  const t1 = performance.now()
  const c = compressRows(sparse, n)
  factorize(c.r0, n, n, c.qtb)
  const own = performance.now() - t1
  let mlText = 'skipped'
  let ratio = '—'
  if (stations <= 300) {
    const mat = new Matrix(rows)
    const t2 = performance.now()
    new QrDecomposition(mat)
    const ml = performance.now() - t2
    mlText = ml.toFixed(0)
    ratio = `${(ml / own).toFixed(1)}×`
  }
  peakRss = Math.max(peakRss, process.memoryUsage().rss)
  console.log(
    [
      String(side * side).padStart(8),
      String(res.counts.n).padStart(5),
      String(res.counts.u).padStart(9),
      timings.approximationMs.toFixed(0).padStart(10),
      timings.factorizationMs.toFixed(0).padStart(10),
      timings.statisticsMs.toFixed(0).padStart(9),
      total.toFixed(0).padStart(9),
      (peakRss / 2 ** 20).toFixed(0).padStart(12),
      own.toFixed(0).padStart(9),
      mlText.padStart(16),
      ratio.padStart(6),
    ].join(' '),
  )
}
clearInterval(sample)
