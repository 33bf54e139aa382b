// Security headers on every response. The fixed ones (nosniff, Referrer-Policy,
// Permissions-Policy, frame-ancestors, a locked-down CSP for everything that
// is not a page, HSTS over https) are set when the request arrives, before any
// handler, so static files get them too. Pages replace the CSP with their own:
// Nuxt writes one inline script (window.__NUXT__ with the runtime config),
// which is allowed by a nonce made fresh for each response; no other inline
// script runs. A firm's map-tile host is allowed only when one of the
// signed-in person's firms set one.
import { randomBytes } from 'node:crypto'
import type { H3Event } from 'h3'
import { eq } from 'drizzle-orm'
import { getToken } from '#auth'
import { firms, memberships } from '../db/schema'
import { useDb } from '../db/client'
import { fixedHeaders, pageCsp, tileOrigin } from '../utils/security-headers'

/** Origins of the tile servers the signed-in person's firms configured (none when signed out). */
async function tileOrigins(event: H3Event): Promise<string[]> {
  try {
    const token = await getToken({ event })
    const uid = token && (token as { uid?: unknown }).uid
    if (typeof uid !== 'number') return []
    const rows = await useDb().select({ settings: firms.settings }).from(memberships)
      .innerJoin(firms, eq(firms.id, memberships.firmId)).where(eq(memberships.userId, uid))
    const out = new Set<string>()
    for (const r of rows) {
      const origin = tileOrigin(r.settings?.tileUrl)
      if (origin) out.add(origin)
    }
    return [...out]
  } catch {
    return []
  }
}

export default defineNitroPlugin((nitro) => {
  nitro.hooks.hook('request', (event) => {
    setResponseHeaders(event, fixedHeaders())
  })
  nitro.hooks.hook('render:html', (html, { event }) => {
    const nonce = randomBytes(18).toString('base64')
    event.context.cspNonce = nonce
    const add = (parts: string[]) => parts.map((p) => p.replace(/<script(?![^>]*\snonce=)/g, `<script nonce="${nonce}"`))
    html.head = add(html.head)
    html.bodyPrepend = add(html.bodyPrepend)
    html.body = add(html.body)
    html.bodyAppend = add(html.bodyAppend)
  })
  nitro.hooks.hook('render:response', async (response, { event }) => {
    const nonce = event.context.cspNonce as string | undefined
    if (!nonce) return
    const { 'x-powered-by': _drop, ...headers } = (response.headers ?? {}) as Record<string, string>
    response.headers = { ...headers, 'content-security-policy': pageCsp(nonce, await tileOrigins(event)) }
  })
})
