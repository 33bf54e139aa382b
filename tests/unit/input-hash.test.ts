// The run's input hash is fed to SHA-256 in pieces (canonicalSha256), so a
// 10,000-station run never builds its whole canonical text as one string.
// Hashes already stored with runs and sign-offs must still verify, so the
// digest must equal SHA-256 of the one-string canonical JSON. Known answers
// are SHA-256 (node:crypto, FIPS 180-4) of JSON text written out here by hand.
import { createHash } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { MappedList, canonicalSha256 } from '../../server/services/run-inputs'

/**
 * The one-string canonical JSON that run input hashes were made with before
 * they were fed in pieces (server/services/run-inputs.ts until 2026-12-04),
 * kept here as the reference the stored hashes must still match.
 */
function canonicalJson(v: unknown): string {
  if (v === null || typeof v !== 'object') return JSON.stringify(v ?? null)
  if (Array.isArray(v)) return `[${v.map(canonicalJson).join(',')}]`
  const o = v as Record<string, unknown>
  return `{${Object.keys(o).filter((k) => o[k] !== undefined).sort().map((k) => `${JSON.stringify(k)}:${canonicalJson(o[k])}`).join(',')}}`
}

const sha = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')

describe('canonicalSha256', () => {
  it('hashes the sorted-key JSON text written out by hand', () => {
    const v = { b: 1, a: [1, 'x', null, { d: undefined, c: true }], e: undefined }
    expect(canonicalSha256(v)).toBe(sha('{"a":[1,"x",null,{"c":true}],"b":1}'))
  })

  it('hashes a MappedList as the array of its mapped items', () => {
    const rows = [{ n: 'B', v: 2 }, { n: 'A', v: 1 }]
    expect(canonicalSha256({ list: new MappedList(rows, (r) => ({ name: r.n, value: r.v * 10 })) }))
      .toBe(sha('{"list":[{"name":"B","value":20},{"name":"A","value":10}]}'))
  })

  it('equals SHA-256 of the one-string canonical JSON on a large input with multi-byte text across its 64 KiB pieces', () => {
    let seed = 7
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648)
    const names = ['KF2', 'Ø-pillar', '𝑥 mark', 'tab\there', 'quote"s', 'back\\slash', '']
    const rows = Array.from({ length: 20_000 }, (_, i) => ({
      id: i, at: names[i % names.length], to: names[(i * 3) % names.length], value: (rnd() - 0.5) * 1e6,
      sigma: i % 5 === 0 ? null : rnd(), note: i % 7 === 0 ? undefined : 'ok', vector: i % 11 === 0 ? { dx: rnd(), dy: -0, dz: 1e21 } : undefined,
    }))
    const plain = { settings: { datum: 'as-stored', confidence: 0.95 }, rows }
    const expected = sha(canonicalJson(plain))
    expect(canonicalJson(plain).length).toBeGreaterThan(4 * 65536)
    expect(canonicalSha256(plain)).toBe(expected)
    expect(canonicalSha256({ settings: plain.settings, rows: new MappedList(rows, (r) => r) })).toBe(expected)
  })
})
