// Checking credentials, with throttling per account and per address so that
// guessing passwords is slow. The answer never says whether an e-mail exists.
import { eq } from 'drizzle-orm'
import { RateLimiterMemory } from 'rate-limiter-flexible'
import { users } from '../db/schema'
import { useDb } from '../db/client'
import { verifyPassword } from './passwords'
import { ThrottledError } from '../utils/errors'

// 10 failed attempts per account and 30 per address within 15 minutes (common practice for interactive sign-in).
const perAccount = new RateLimiterMemory({ keyPrefix: 'signin-account', points: 10, duration: 15 * 60 })
const perAddress = new RateLimiterMemory({ keyPrefix: 'signin-address', points: 30, duration: 15 * 60 })

export { ThrottledError }

export async function throttleState(email: string, ip: string): Promise<number> {
  const [a, b] = await Promise.all([perAccount.get(email.toLowerCase()), perAddress.get(ip)])
  const wait = Math.max(
    a && a.consumedPoints >= 10 ? a.msBeforeNext : 0,
    b && b.consumedPoints >= 30 ? b.msBeforeNext : 0,
  )
  return Math.ceil(wait / 1000)
}

export async function checkCredentials(emailRaw: string, password: string, ip: string) {
  const email = emailRaw.trim().toLowerCase()
  const wait = await throttleState(email, ip)
  if (wait > 0) throw new ThrottledError(wait)
  const [user] = await useDb().select().from(users).where(eq(users.email, email)).limit(1)
  const ok = await verifyPassword(password, user?.passwordHash)
  if (!ok || !user) {
    await Promise.all([perAccount.penalty(email, 1), perAddress.penalty(ip, 1)])
    return null
  }
  await perAccount.delete(email)
  return user
}
