// Before next-auth sees a sign-in, refuse it when the account or the address
// has failed too often, and hand the real client address to the credentials
// check (overwriting any header a client sent).
import { throttleState } from '../services/signin'

export default defineEventHandler(async (event) => {
  const path = event.path.split('?')[0]
  if (event.method !== 'POST' || path !== '/api/auth/callback/credentials') return
  const ip = clientIp(event)
  event.node.req.headers['x-tiepoint-client-ip'] = ip
  const body = await readBody(event).catch(() => ({})) as { email?: string }
  const wait = await throttleState(String(body?.email ?? ''), ip)
  if (wait > 0) {
    setResponseHeader(event, 'retry-after', wait)
    setResponseStatus(event, 429)
    return { statusCode: 429, message: `Too many sign-in attempts. Try again in ${Math.ceil(wait / 60)} minutes.` }
  }
})
