// Householder QR with column pivoting against ml-matrix (independent SVD) and
// against the normal equations on an ill-conditioned design.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { CholeskyDecomposition, Matrix, SVD } from 'ml-matrix'
import { applyQt, cofactor, factorize, residualNormSq, solve } from '../../../server/engine/qr'
import { rng } from './helpers'

function randomMatrix(m: number, n: number, seed: number): { a: Float64Array; b: Float64Array } {
  const r = rng(seed)
  const a = new Float64Array(m * n)
  for (let i = 0; i < m * n; i++) a[i] = r() * 2 - 1
  const b = new Float64Array(m)
  for (let i = 0; i < m; i++) b[i] = r() * 2 - 1
  return { a, b }
}

const toMl = (a: Float64Array, m: number, n: number) => {
  const rows: number[][] = []
  for (let i = 0; i < m; i++) rows.push(Array.from({ length: n }, (_, j) => a[j * m + i]))
  return new Matrix(rows)
}

describe('QR factorization', () => {
  it('property: QᵀQ = I to machine precision (Qᵀ applied to the identity)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 3, max: 8 }), (seed, n) => {
        const m = n + 5
        const { a, b } = randomMatrix(m, n, seed)
        const f = factorize(a, m, n, b, { pivotThreshold: 1 })
        const qt = new Float64Array(m * m)
        for (let j = 0; j < m; j++) {
          const e = new Float64Array(m)
          e[j] = 1
          applyQt(f, e)
          qt.set(e, j * m)
        }
        let worst = 0
        for (let i = 0; i < m; i++)
          for (let j = 0; j < m; j++) {
            let s = 0
            for (let k = 0; k < m; k++) s += qt[i * m + k] * qt[j * m + k]
            worst = Math.max(worst, Math.abs(s - (i === j ? 1 : 0)))
          }
        expect(worst).toBeLessThan(1e-14)
      }),
      { numRuns: 20 },
    )
  })

  it('property: Qᵀ·A·Π reproduces R (upper triangle) and zeros below it', () => {
    const m = 12
    const n = 5
    const { a, b } = randomMatrix(m, n, 7)
    const f = factorize(a.slice(), m, n, b)
    for (let k = 0; k < n; k++) {
      const col = a.slice(f.perm[k] * m, f.perm[k] * m + m)
      applyQt(f, col)
      for (let i = 0; i < m; i++) {
        const expected = i <= k ? f.a[k * m + i] : 0
        expect(Math.abs(col[i] - expected)).toBeLessThan(1e-13)
      }
    }
  })

  it('property: least-squares solution equals ml-matrix SVD solution to 1e-9 relative (independent library)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 2, max: 12 }), fc.integer({ min: 0, max: 20 }), (seed, n, extra) => {
        const m = n + extra + 1
        const { a, b } = randomMatrix(m, n, seed)
        const ref = new SVD(toMl(a, m, n)).solve(Matrix.columnVector(Array.from(b))).to1DArray()
        const f = factorize(a.slice(), m, n, b)
        const x = solve(f)
        const scale = Math.max(...ref.map(Math.abs), 1e-300)
        for (let j = 0; j < n; j++) expect(Math.abs(x[j] - ref[j]) / scale).toBeLessThan(1e-9)
        // ‖Ax − b‖² from Qᵀb equals the explicitly computed one
        let rr = 0
        for (let i = 0; i < m; i++) {
          let s = -b[i]
          for (let j = 0; j < n; j++) s += a[j * m + i] * x[j]
          rr += s * s
        }
        expect(residualNormSq(f)).toBeCloseTo(rr, 10)
      }),
      { numRuns: 40 },
    )
  })

  it('cofactor matrix R⁻¹R⁻ᵀ equals (AᵀA)⁻¹ from ml-matrix SVD pseudo-inverse', () => {
    const m = 15
    const n = 6
    const { a, b } = randomMatrix(m, n, 99)
    const f = factorize(a.slice(), m, n, b)
    const q = cofactor(f)
    const ml = toMl(a, m, n)
    const ref = new SVD(ml.transpose().mmul(ml)).inverse()
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(q[j * n + i]).toBeCloseTo(ref.get(i, j), 10)
  })

  it('detects the rank of a matrix with a dependent column and leaves it at the end', () => {
    const m = 10
    const n = 4
    const { a, b } = randomMatrix(m, n, 3)
    // column 2 = column 0 + column 1
    for (let i = 0; i < m; i++) a[2 * m + i] = a[i] + a[m + i]
    const f = factorize(a, m, n, b)
    expect(f.rank).toBe(3)
  })

  it('ill-conditioned design: normal equations lose accuracy, QR keeps it (both shown)', () => {
    // Vandermonde-like polynomial design on [1, 2], degree 9: κ(A) ≈ 1e9, κ(AᵀA) ≈ 1e18
    const m = 40
    const n = 10
    const a = new Float64Array(m * n)
    const xTrue = Array.from({ length: n }, (_, j) => 1 + j / 10)
    const b = new Float64Array(m)
    for (let i = 0; i < m; i++) {
      const t = 1 + i / (m - 1)
      for (let j = 0; j < n; j++) a[j * m + i] = t ** j
      for (let j = 0; j < n; j++) b[i] += a[j * m + i] * xTrue[j]
    }
    const A = toMl(a, m, n)
    const x = solve(factorize(a.slice(), m, n, b))
    const qrError = Math.max(...xTrue.map((v, j) => Math.abs(x[j] - v)))
    const N = A.transpose().mmul(A)
    const rhs = A.transpose().mmul(Matrix.columnVector(Array.from(b)))
    const chol = new CholeskyDecomposition(N)
    const xn = chol.isPositiveDefinite() ? chol.solve(rhs).to1DArray() : new SVD(N).solve(rhs).to1DArray()
    const neError = Math.max(...xTrue.map((v, j) => Math.abs(xn[j] - v)))
    expect(qrError).toBeLessThan(1e-4)
    expect(neError).toBeGreaterThan(100 * qrError)
  })
})
