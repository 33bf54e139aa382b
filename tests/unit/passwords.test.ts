// Password and token hashing (server/services/passwords.ts), checked against
// independent implementations: node:crypto for SHA-256 (FIPS 180-4 test
// vector "abc") and bcryptjs' own compare for the stored password hashes.
import { createHash } from 'node:crypto'
import bcrypt from 'bcryptjs'
import { describe, expect, it } from 'vitest'
import { hashPassword, newToken, sha256Hex, verifyPassword } from '../../server/services/passwords'

describe('sha256Hex', () => {
  it('matches the FIPS 180-4 example for "abc"', () => {
    // FIPS 180-4 / NIST CSRC "SHA256.pdf" example: SHA-256("abc").
    expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad')
  })
  it('matches node:crypto on bytes', () => {
    const bytes = Buffer.from([0, 1, 2, 250, 251, 252])
    expect(sha256Hex(bytes)).toBe(createHash('sha256').update(bytes).digest('hex'))
  })
})

describe('newToken', () => {
  it('gives a prefixed random token whose stored hash is its SHA-256', () => {
    const { token, hash, shown } = newToken('tp')
    expect(token).toMatch(/^tp_[A-Za-z0-9_-]{43}$/)
    expect(hash).toBe(createHash('sha256').update(token).digest('hex'))
    expect(hash).not.toContain(token)
    expect(token.startsWith(shown)).toBe(true)
    // The part shown in lists is far too short to be used as the token.
    expect(shown.length).toBeLessThan(token.length / 3)
  })
  it('never repeats', () => {
    const seen = new Set(Array.from({ length: 200 }, () => newToken('tp').token))
    expect(seen.size).toBe(200)
  })
})

describe('password hashing', () => {
  it('stores a bcrypt hash that bcrypt itself verifies, never the password', async () => {
    const hash = await hashPassword('correct horse battery')
    expect(hash).toMatch(/^\$2[aby]\$10\$/)
    expect(hash).not.toContain('correct horse battery')
    expect(await bcrypt.compare('correct horse battery', hash)).toBe(true)
  })
  it('verifies the right password and refuses a wrong one', async () => {
    const hash = await hashPassword('tiepoint-example-1')
    expect(await verifyPassword('tiepoint-example-1', hash)).toBe(true)
    expect(await verifyPassword('tiepoint-example-2', hash)).toBe(false)
  })
  it('refuses when there is no password hash (invited, not yet accepted)', async () => {
    expect(await verifyPassword('anything at all', null)).toBe(false)
    expect(await verifyPassword('', undefined)).toBe(false)
  })
  it('salts: the same password hashes differently each time', async () => {
    const [a, b] = await Promise.all([hashPassword('same password'), hashPassword('same password')])
    expect(a).not.toBe(b)
  })
})
