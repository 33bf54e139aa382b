// Request-level hygiene that needs no server: spreadsheet-formula escaping of
// CSV cells, text that cannot be stored, control characters in names, the
// client address behind trusted proxies, and LandXML without entity expansion.
import { afterEach, describe, expect, it } from 'vitest'
import type { H3Event } from 'h3'
import { safeCell } from '../../server/services/csv'
import { badText } from '../../server/utils/body'
import { clientIp } from '../../server/utils/request'
import { nameText } from '../../shared/schemas/text'
import { readLandXml } from '../../server/engine/io/landxml'

describe('CSV cells a spreadsheet would run (OWASP "CSV Injection")', () => {
  it.each([
    ['=HYPERLINK("http://x.invalid")', `'=HYPERLINK("http://x.invalid")`],
    ['+1+cmd|x', `'+1+cmd|x`],
    ['-2+3', `'-2+3`],
    ['@SUM(A1)', `'@SUM(A1)`],
    ['\tTAB', `'\tTAB`],
  ])('%j is written as text', (input, out) => {
    expect(safeCell(input)).toBe(out)
  })
  it.each(['-1234.5678', '+12.5', '-1e-7', 'CP-1', 'A=B', ''])('%j stays as it is (numbers keep their sign)', (v) => {
    expect(safeCell(v)).toBe(v)
  })
})

describe('text that cannot be stored', () => {
  it('names the field holding NUL or a lone surrogate, at any depth', () => {
    expect(badText({ a: 'ok', b: { c: ['x', 'y\u0000'] } }).map((e) => e.field)).toEqual(['b.c.1'])
    expect(badText({ name: 'half \ud800 pair' }).map((e) => e.field)).toEqual(['name'])
    expect(badText({ name: 'low \udc00 alone' }).map((e) => e.field)).toEqual(['name'])
  })
  it('accepts proper pairs (emoji, astral characters)', () => {
    expect(badText({ name: 'Survey 📐 𝔸' })).toEqual([])
  })
})

describe('names', () => {
  it.each(['Line\nbreak', 'Bell\u0007', 'Esc\u001b[31m', 'Bidi\u202eevil', 'Del\u007f'])('%j is refused', (v) => {
    expect(nameText(120).safeParse(v).success).toBe(false)
  })
  it('ordinary names with accents and punctuation pass', () => {
    expect(nameText(120).parse('  Ærø Bridge — north pier (CP-1)  ')).toBe('Ærø Bridge — north pier (CP-1)')
  })
})

describe('client address', () => {
  const event = (socket: string, xff?: string) =>
    ({ node: { req: { socket: { remoteAddress: socket }, headers: xff ? { 'x-forwarded-for': xff } : {} } } }) as unknown as H3Event
  afterEach(() => { delete process.env.TRUSTED_PROXIES })

  it('is the socket address when no proxy is trusted, whatever X-Forwarded-For says', () => {
    expect(clientIp(event('::ffff:203.0.113.5', '198.51.100.1'))).toBe('203.0.113.5')
  })
  it('behind a trusted proxy, is the nearest untrusted X-Forwarded-For hop', () => {
    process.env.TRUSTED_PROXIES = '10.0.0.0/8, 192.0.2.10'
    // client-supplied junk on the left is ignored: the right-most untrusted hop is the client
    expect(clientIp(event('10.1.2.3', '1.1.1.1, 198.51.100.7, 192.0.2.10'))).toBe('198.51.100.7')
    // a socket that is not a trusted proxy is believed, not its header
    expect(clientIp(event('198.51.100.9', '1.1.1.1'))).toBe('198.51.100.9')
  })
})

describe('LandXML without entity expansion', () => {
  it('an entity declared in a DOCTYPE is not expanded', () => {
    const doc = `<?xml version="1.0"?>
<!DOCTYPE LandXML [<!ENTITY x "EXPANDEDTEXT">]>
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">
<Units><Metric linearUnit="meter" angularUnit="decimal degrees" areaUnit="squareMeter" volumeUnit="cubicMeter"/></Units>
<CgPoints><CgPoint name="A&x;" pntSurv="control">100 200 10</CgPoint><CgPoint name="B" pntSurv="control">150 250 10</CgPoint></CgPoints>
</LandXML>`
    const r = readLandXml(doc)
    expect(JSON.stringify(r)).not.toContain('EXPANDEDTEXT')
  })
})

describe('security headers', () => {
  afterEach(() => { delete process.env.TIEPOINT_PUBLIC_URL })
  it('over http: no HSTS; the page CSP allows scripts only from the app and the nonce', async () => {
    const { fixedHeaders, pageCsp } = await import('../../server/utils/security-headers')
    process.env.TIEPOINT_PUBLIC_URL = 'http://127.0.0.1:3000'
    expect(fixedHeaders()['strict-transport-security']).toBeUndefined()
    const csp = pageCsp('abc123', [])
    expect(csp).toContain("script-src 'self' 'nonce-abc123';")
    expect(csp.match(/script-src[^;]*/)![0]).not.toContain('unsafe')
  })
  it('over https: HSTS and upgrade-insecure-requests', async () => {
    const { fixedHeaders, pageCsp } = await import('../../server/utils/security-headers')
    process.env.TIEPOINT_PUBLIC_URL = 'https://survey.example.test'
    expect(fixedHeaders()['strict-transport-security']).toMatch(/max-age=\d+/)
    expect(pageCsp('n', [])).toContain('upgrade-insecure-requests')
  })
  it('a tile URL becomes a CSP source only when it is a plain https host', async () => {
    const { tileOrigin } = await import('../../server/utils/security-headers')
    expect(tileOrigin('https://{s}.tiles.example.test/{z}/{x}/{y}.png')).toBe('https://*.tiles.example.test')
    expect(tileOrigin('https://tiles.example.test:8443/{z}/{x}/{y}.png')).toBe('https://tiles.example.test:8443')
    expect(tileOrigin('http://tiles.example.test/{z}/{x}/{y}.png')).toBeNull()
    // a value that would smuggle more policy into the header
    expect(tileOrigin("https://evil.test; script-src 'unsafe-inline'")).toBeNull()
    expect(tileOrigin(null)).toBeNull()
  })
})
