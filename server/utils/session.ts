// Browser sessions: next-auth JWTs in an http-only cookie. A session is valid
// while its version equals the person's (a password change or reset raises
// it) and for 12 hours after sign-in, however active it was.
import type { H3Event } from 'h3'
import { encode } from 'next-auth/jwt'
import { getToken } from '#auth'
import { servedOverHttps } from './request'

export const SESSION_HOURS = 12

export interface SessionClaims { uid?: number; sv?: number; sat?: number }

export const sessionCookieName = () => `${servedOverHttps() ? '__Secure-' : ''}next-auth.session-token`

/** Why this session is over, or null while it is valid. */
export function sessionEnded(claims: SessionClaims, currentVersion: number, nowS = Date.now() / 1000): string | null {
  if ((claims.sv ?? 0) !== currentVersion) return 'Your session ended because your password was changed. Sign in again.'
  if (typeof claims.sat !== 'number' || nowS - claims.sat > SESSION_HOURS * 3600) return `Sessions last ${SESSION_HOURS} hours from sign-in. Sign in again.`
  return null
}

/**
 * After a password change the person's other sessions end (the version went
 * up); this one goes on, re-issued with the new version and its original
 * sign-in time, so the 12 hours are not restarted.
 */
export async function reissueSession(event: H3Event, sessionVersion: number): Promise<void> {
  const secret = useRuntimeConfig().authSecret || process.env.AUTH_SECRET || ''
  const token = await getToken({ event })
  if (!token) return
  const claims = token as SessionClaims
  const left = Math.max(0, (claims.sat ?? 0) + SESSION_HOURS * 3600 - Math.floor(Date.now() / 1000))
  const value = await encode({ token: { ...token, sv: sessionVersion }, secret, maxAge: left })
  setCookie(event, sessionCookieName(), value, {
    httpOnly: true, sameSite: 'lax', path: '/', secure: servedOverHttps(), expires: new Date(Date.now() + left * 1000),
  })
}
