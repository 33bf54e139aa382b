// Password reset by e-mail. The request always answers the same way, whether
// or not the address has an account, and the work (lookup, mail) runs after
// the answer so timing does not tell either. Links work once, for one hour.
import { and, eq, gt, isNull } from 'drizzle-orm'
import { RateLimiterMemory } from 'rate-limiter-flexible'
import { passwordResets, users } from '../db/schema'
import { useDb } from '../db/client'
import { DomainError } from '../utils/errors'
import { publicUrl, sendMail } from './mail'
import { hashPassword, newToken, sha256Hex } from './passwords'

export const RESET_MINUTES = 60
export const RESET_REQUESTED_MESSAGE = 'If that address belongs to a Tiepoint account, a reset link is on its way. It works once, within one hour.'

// At most 5 reset mails per address per hour, so the form cannot be used to flood someone's inbox (common practice).
const perAddress = new RateLimiterMemory({ keyPrefix: 'reset-mail', points: 5, duration: 3600 })

async function sendResetLink(email: string): Promise<void> {
  const db = useDb()
  const [user] = await db.select({ id: users.id, name: users.name }).from(users).where(eq(users.email, email)).limit(1)
  if (!user) return
  try {
    await perAddress.consume(email)
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

export async function confirmPasswordReset(token: string, password: string): Promise<void> {
  const passwordHash = await hashPassword(password)
  await useDb().transaction(async (tx) => {
    const now = new Date()
    const [claimed] = await tx.update(passwordResets).set({ usedAt: now })
      .where(and(eq(passwordResets.tokenHash, sha256Hex(token)), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, now)))
      .returning({ userId: passwordResets.userId })
    if (!claimed) throw new DomainError('not_found', 'This reset link is not valid: it may have expired or been used already. Ask for a new one.', [{ field: 'token', message: 'token: is not valid or has expired' }])
    await tx.update(users).set({ passwordHash }).where(eq(users.id, claimed.userId))
    // Older links for the same person stop working once the password has changed.
    await tx.update(passwordResets).set({ usedAt: now })
      .where(and(eq(passwordResets.userId, claimed.userId), isNull(passwordResets.usedAt)))
  })
}
