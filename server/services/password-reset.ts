// Password reset by e-mail. The request always answers the same way, whether
// or not the address has an account, and the work (lookup, mail) runs after
// the answer so timing does not tell either. Links work once, for one hour.
import { and, eq, gt, isNull, sql } from 'drizzle-orm'
import { RateLimiterPostgres } from 'rate-limiter-flexible'
import { apiTokens, passwordResets, users } from '../db/schema'
import { useDb, usePool } from '../db/client'
import { DomainError } from '../utils/errors'
import { auditPerson } from './audit'
import { publicUrl, sendMail } from './mail'
import { hashPassword, newToken, sha256Hex } from './passwords'

export const RESET_MINUTES = 60
export const RESET_REQUESTED_MESSAGE = 'If that address belongs to a Tiepoint account, a reset link is on its way. It works once, within one hour.'

// At most 5 reset mails per address per hour, so the form cannot be used to flood someone's inbox (common practice).
// Kept in PostgreSQL like the sign-in throttle, so every app process counts together.
let perAddress: RateLimiterPostgres | undefined
const resetLimiter = () => (perAddress ??= new RateLimiterPostgres({
  storeClient: usePool(), tableName: 'rate_limits', tableCreated: true, clearExpiredByTimeout: false, keyPrefix: 'reset-mail', points: 5, duration: 3600,
}))

async function sendResetLink(email: string): Promise<void> {
  const db = useDb()
  const [user] = await db.select({ id: users.id, name: users.name }).from(users).where(eq(users.email, email)).limit(1)
  if (!user) return
  try {
    await resetLimiter().consume(email)
  } catch {
    return
  }
  const { token, hash } = newToken('tpr')
  await db.insert(passwordResets).values({ userId: user.id, tokenHash: hash, expiresAt: new Date(Date.now() + RESET_MINUTES * 60_000) })
  await sendMail({
    to: email,
    subject: 'Reset your Tiepoint password',
    paragraphs: [
      `Hello ${user.name}, someone (hopefully you) asked to reset the password of your Tiepoint account.`,
      `The link below works once and expires in ${RESET_MINUTES} minutes. If you did not ask for this, ignore this message: your password stays as it is.`,
    ],
    link: { url: publicUrl(`/reset/${token}`), label: 'Choose a new password' },
    firmName: 'Tiepoint',
  })
}

/** Starts the reset in the background and returns at once. */
export function requestPasswordReset(email: string): void {
  sendResetLink(email).catch((error: Error) => console.error('[tiepoint] password reset mail failed:', error.message))
}

/**
 * Sets a new password with a reset link's token. The token is checked before
 * the (deliberately slow) password hash is computed, so made-up tokens cost
 * the server nothing. A reset ends every session of the person, revokes their
 * API tokens and every other open reset link: whoever knew the old password
 * or held a token keeps nothing.
 */
export async function confirmPasswordReset(token: string, password: string): Promise<void> {
  const db = useDb()
  const hash = sha256Hex(token)
  const open = () => and(eq(passwordResets.tokenHash, hash), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, new Date()))
  const [valid] = await db.select({ id: passwordResets.id }).from(passwordResets).where(open()).limit(1)
  if (!valid) throw invalidLink()
  const passwordHash = await hashPassword(password)
  await db.transaction(async (tx) => {
    const now = new Date()
    // The conditional UPDATE claims the link once, even under concurrent use.
    const [claimed] = await tx.update(passwordResets).set({ usedAt: now }).where(open()).returning({ userId: passwordResets.userId })
    if (!claimed) throw invalidLink()
    await tx.update(users).set({ passwordHash, sessionVersion: sql`${users.sessionVersion} + 1` }).where(eq(users.id, claimed.userId))
    await tx.update(passwordResets).set({ usedAt: now })
      .where(and(eq(passwordResets.userId, claimed.userId), isNull(passwordResets.usedAt)))
    const revoked = await tx.update(apiTokens).set({ revokedAt: now })
      .where(and(eq(apiTokens.userId, claimed.userId), isNull(apiTokens.revokedAt))).returning({ id: apiTokens.id })
    await auditPerson(claimed.userId, 'password.reset', { sessionsEnded: true, tokensRevoked: revoked.length }, { db: tx })
  })
}

const invalidLink = () => new DomainError('not_found', 'This reset link is not valid: it may have expired or been used already. Ask for a new one.', [{ field: 'token', message: 'token: is not valid or has expired' }])
