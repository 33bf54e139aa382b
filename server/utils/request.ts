// Who is on the other end of a request: the client address and whether a
// state-changing request came from the app's own pages.
import type { H3Event } from 'h3'
import { isIP } from 'node:net'
import { getRequestHeader } from 'h3'
import { forbidden } from './errors'

/** The app is served over https (its public URL says so): HSTS and Secure cookies. */
export const servedOverHttps = () => /^https:/i.test(process.env.TIEPOINT_PUBLIC_URL || process.env.AUTH_ORIGIN || '')

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS'])
export const isStateChange = (event: H3Event) => !SAFE_METHODS.has(event.method.toUpperCase())

/** The origins the app itself is served from: the public URL, the sign-in origin and the Host asked for. */
function ownOrigins(event: H3Event): Set<string> {
  const out = new Set<string>()
  for (const url of [process.env.TIEPOINT_PUBLIC_URL, process.env.AUTH_ORIGIN]) {
    if (!url) continue
    try { out.add(new URL(url).origin) } catch { /* not a URL: ignored */ }
  }
  const host = getRequestHeader(event, 'host')
  if (host) {
    out.add(`http://${host}`)
    out.add(`https://${host}`)
  }
  return out
}

/**
 * A state change made with the session cookie must come from the app's own
 * origin: the Origin header when the browser sent one, else Sec-Fetch-Site.
 * With neither, a cookie-authenticated change is refused (every current
 * browser sends Origin on POST, PATCH and DELETE). Requests with a bearer
 * token carry no ambient credential and are not subject to this rule. Routes
 * without sign-in still refuse a browser request from another site.
 */
export function requireSameOrigin(event: H3Event, via: 'session' | 'token' | 'public'): void {
  if (!isStateChange(event) || via === 'token') return
  const viaCookie = via === 'session'
  const origin = getRequestHeader(event, 'origin')
  const site = getRequestHeader(event, 'sec-fetch-site')
  if (origin && origin !== 'null') {
    if (ownOrigins(event).has(origin)) return
    throw forbidden(`This request came from another site (${origin.slice(0, 100)}); changes are accepted only from Tiepoint's own pages`)
  }
  if (site) {
    if (site === 'same-origin') return
    throw forbidden('This request came from another site; changes are accepted only from Tiepoint\'s own pages')
  }
  if (origin === 'null' || viaCookie) {
    throw forbidden('This request does not say where it came from (no Origin header); changes with the session cookie are accepted only from Tiepoint\'s own pages')
  }
}

// ── client address ─────────────────────────────────────────────────────────

interface Cidr { bytes: number[]; bits: number }

function toBytes(ip: string): number[] | null {
  const v4 = ip.startsWith('::ffff:') && isIP(ip.slice(7)) === 4 ? ip.slice(7) : ip
  if (isIP(v4) === 4) return v4.split('.').map(Number)
  if (isIP(ip) !== 6) return null
  const [head, tail] = ip.split('::') as [string, string | undefined]
  const h = head ? head.split(':') : []
  const t = tail !== undefined && tail ? tail.split(':') : []
  const groups = tail === undefined ? h : [...h, ...Array(8 - h.length - t.length).fill('0'), ...t]
  return groups.flatMap((g) => { const n = parseInt(g || '0', 16); return [n >> 8, n & 255] })
}

function parseCidr(s: string): Cidr | null {
  const [addr, len] = s.trim().split('/')
  const bytes = toBytes(addr ?? '')
  if (!bytes) return null
  const bits = len === undefined ? bytes.length * 8 : Number(len)
  return Number.isInteger(bits) && bits >= 0 && bits <= bytes.length * 8 ? { bytes, bits } : null
}

function inCidr(ip: string, c: Cidr): boolean {
  const b = toBytes(ip)
  if (!b || b.length !== c.bytes.length) return false
  for (let i = 0; i < c.bits; i++) {
    const byte = i >> 3, mask = 0x80 >> (i & 7)
    if ((b[byte]! & mask) !== (c.bytes[byte]! & mask)) return false
  }
  return true
}

let trustedCache: { raw: string; list: Cidr[] } | undefined
function trustedProxies(): Cidr[] {
  const raw = process.env.TRUSTED_PROXIES ?? ''
  if (trustedCache?.raw !== raw) trustedCache = { raw, list: raw.split(',').filter((s) => s.trim()).map(parseCidr).filter((c): c is Cidr => !!c) }
  return trustedCache.list
}

/**
 * The client's address: the socket's, unless the socket is one of
 * TRUSTED_PROXIES (addresses or CIDR ranges, comma-separated); then the
 * nearest X-Forwarded-For entry that is not itself a trusted proxy. A client
 * cannot choose its address by sending the header itself.
 */
export function clientIp(event: H3Event): string {
  const socket = (event.node.req.socket?.remoteAddress ?? 'unknown').replace(/^::ffff:(\d+\.\d+\.\d+\.\d+)$/, '$1')
  const trusted = trustedProxies()
  if (!trusted.length || !trusted.some((c) => inCidr(socket, c))) return socket
  const hops = String(getRequestHeader(event, 'x-forwarded-for') ?? '').split(',').map((s) => s.trim()).filter(Boolean)
  for (let i = hops.length - 1; i >= 0; i--) {
    const hop = hops[i]!
    if (!isIP(hop)) return socket
    if (!trusted.some((c) => inCidr(hop, c))) return hop
  }
  return hops[0] ?? socket
}
