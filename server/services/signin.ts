// Checking credentials, with a sign-in throttle that slows guessing down
// without letting anyone lock a known person out: after a few free failures
// each further failure makes the next attempt wait twice as long, up to a
// short cap per account (so the person can still sign in within a minute)
// and a longer cap per client address (so one address cannot guess across
// many accounts). The counters live in PostgreSQL (rate-limiter-flexible's
// store, table rate_limits), so every app process shares them. The answer
// never says whether an e-mail exists. Every check is recorded in the audit
// log as a person-level event.
import { eq, lt } from 'drizzle-orm'
import { RateLimiterPostgres } from 'rate-limiter-flexible'
import type { RateLimiterRes } from 'rate-limiter-flexible'
import { rateLimits, users } from '../db/schema'
import { useDb, usePool } from '../db/client'
import { ThrottledError, waitText } from '../utils/errors'
import { auditPerson } from './audit'
import { verifyPassword } from './passwords'

export { ThrottledError }

/** Failures counted within this window (common practice for interactive sign-in: 15 minutes). */
const WINDOW_S = 15 * 60
/** Free failures, then the wait doubles from 1 s up to the cap. */
export const ACCOUNT_POLICY = { free: 5, capS: 60 }
export const ADDRESS_POLICY = { free: 50, capS: 15 * 60 }

type Limiter = RateLimiterPostgres
let limiters: { failures: Limiter; waits: Limiter } | undefined

function useLimiters() {
  limiters ??= {
    failures: new RateLimiterPostgres({ storeClient: usePool(), tableName: 'rate_limits', tableCreated: true, clearExpiredByTimeout: false, keyPrefix: 'signin-fail', points: 1_000_000, duration: WINDOW_S }),
    // A "wait" is a block until a time: block() sets it, get() reads how long is left.
    waits: new RateLimiterPostgres({ storeClient: usePool(), tableName: 'rate_limits', tableCreated: true, clearExpiredByTimeout: false, keyPrefix: 'signin-wait', points: 1, duration: WINDOW_S }),
  }
  return limiters
}

const accountKey = (email: string) => `a:${email.trim().toLowerCase()}`
const addressKey = (ip: string) => `ip:${ip}`

const remaining = (r: RateLimiterRes | null) => (r && r.consumedPoints > 1 ? r.msBeforeNext : 0)

/** Seconds before this account may be tried again from this address (0: now). */
export async function throttleState(email: string, ip: string): Promise<number> {
  const { waits } = useLimiters()
  const [a, b] = await Promise.all([waits.get(accountKey(email)), waits.get(addressKey(ip))])
  return Math.ceil(Math.max(remaining(a), remaining(b)) / 1000)
}

async function recordFailure(key: string, policy: { free: number; capS: number }) {
  const { failures, waits } = useLimiters()
  const res = await failures.penalty(key, 1)
  const over = res.consumedPoints - policy.free
  if (over > 0) await waits.block(key, Math.min(2 ** (over - 1), policy.capS))
}

async function forget(key: string) {
  const { failures, waits } = useLimiters()
  await Promise.all([failures.delete(key), waits.delete(key)])
}

/** Throws ThrottledError when the account or the address must wait. */
export async function assertNotThrottled(email: string, ip: string): Promise<void> {
  const wait = await throttleState(email, ip)
  if (wait > 0) throw new ThrottledError(wait, `Too many sign-in attempts. Try again in ${waitText(wait)}.`)
}

export type CredentialPurpose = 'signin' | 'password.change' | 'invitation.accept' | 'signoff'

/**
 * The user when the password is right, null when not; ThrottledError when
 * the account or address must wait first. Sign-in, password change,
 * invitation acceptance and signing all check passwords here, so all are
 * throttled and recorded the same way.
 */
export async function checkCredentials(emailRaw: string, password: string, ip: string, purpose: CredentialPurpose = 'signin') {
  const email = emailRaw.trim().toLowerCase()
  await assertNotThrottled(email, ip)
  const [user] = await useDb().select().from(users).where(eq(users.email, email)).limit(1)
  const ok = await verifyPassword(password, user?.passwordHash)
  if (!ok || !user) {
    await Promise.all([recordFailure(accountKey(email), ACCOUNT_POLICY), recordFailure(addressKey(ip), ADDRESS_POLICY)])
    await auditPerson(user?.id ?? null, `${purpose === 'signin' ? 'signin' : purpose}.failure`, { ip, ...(user ? {} : { email: email.slice(0, 254) }) })
    // Expired counters are removed now and then rather than by a timer in every process.
    if (Math.random() < 0.02) await useDb().delete(rateLimits).where(lt(rateLimits.expire, Date.now())).catch(() => undefined)
    return null
  }
  await forget(accountKey(email))
  if (purpose === 'signin') await auditPerson(user.id, 'signin.success', { ip })
  return user
}
