// The security headers themselves (server/plugins/security-headers.ts sets them):
// a fixed set for every response and a page CSP with a per-response nonce.
import { servedOverHttps } from './request'

export function pageCsp(nonce: string, tiles: string[]): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}'`,
    // Vue and Leaflet set style attributes; styles cannot run code.
    "style-src 'self' 'unsafe-inline'",
    `img-src 'self' data: blob:${tiles.length ? ' ' + tiles.join(' ') : ''}`,
    "font-src 'self' data:",
    "connect-src 'self'",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
    ...(servedOverHttps() ? ['upgrade-insecure-requests'] : []),
  ].join('; ')
}

/** Not a page: API answers and files. Nothing may run, frame it or be fetched by it. */
const FILE_CSP = "default-src 'none'; img-src 'self'; style-src 'self'; font-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'"

export function fixedHeaders(): Record<string, string> {
  return {
    'content-security-policy': FILE_CSP,
    'x-frame-options': 'DENY',
    'x-content-type-options': 'nosniff',
    'referrer-policy': 'strict-origin-when-cross-origin',
    'permissions-policy': 'camera=(), microphone=(), geolocation=(), payment=(), usb=()',
    'cross-origin-opener-policy': 'same-origin',
    ...(servedOverHttps() ? { 'strict-transport-security': 'max-age=31536000; includeSubDomains' } : {}),
  }
}


/**
 * The CSP source for a tile URL template ("https://{s}.tiles.example/{z}/{x}/{y}.png"
 * → "https://*.tiles.example"); only https hosts, nothing for anything else.
 */
export function tileOrigin(url: string | null | undefined): string | null {
  const m = /^https:\/\/([a-z0-9.{}-]+)(?::(\d{1,5}))?(?:[/?#]|$)/i.exec(url ?? '')
  if (!m) return null
  const host = m[1]!.toLowerCase().replace(/\{s\}/g, '*')
  if (!/^(\*\.)?[a-z0-9-]+(\.[a-z0-9-]+)+$/.test(host)) return null
  return `https://${host}${m[2] ? `:${m[2]}` : ''}`
}
