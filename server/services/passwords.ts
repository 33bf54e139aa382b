// Password and token hashing. Passwords: bcrypt (cost 10). Tokens (API,
// invitations, resets): random 32 bytes, stored only as SHA-256.
import { createHash, randomBytes } from 'node:crypto'
import bcrypt from 'bcryptjs'

export const hashPassword = (password: string) => bcrypt.hash(password, 10)
export const verifyPassword = (password: string, hash: string | null | undefined) =>
  hash ? bcrypt.compare(password, hash) : bcrypt.compare(password, DUMMY_HASH).then(() => false)

// Compared against when the e-mail is unknown, so a wrong e-mail costs the same time as a wrong password.
const DUMMY_HASH = '$2b$10$CwTycUXWue0Thq9StjUM0uJ8.xN8/u0/8cC/m8a0O4S9Qk5G1uQ2y'

export function sha256Hex(data: string | Buffer): string {
  return createHash('sha256').update(data).digest('hex')
}

/** A new secret token and its hash; only the hash is stored. */
export function newToken(prefix: string): { token: string; hash: string; shown: string } {
  const token = `${prefix}_${randomBytes(32).toString('base64url')}`
  return { token, hash: sha256Hex(token), shown: token.slice(0, prefix.length + 7) }
}
