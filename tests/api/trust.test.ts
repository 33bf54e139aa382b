// Trust at the request layer: each attack that used to work is tried again and
// must now fail — reading someone else's mail, cross-origin writes, unbounded
// bodies, sessions that outlive a password change, signing with a token,
// guessing without backoff, text that breaks storage — and what people do is
// in the audit log. Every test works on people created for it, so the demo
// accounts stay usable for the other suites.
import { spawn } from 'node:child_process'
import { request as httpRequest } from 'node:http'
import { afterAll, describe, expect, it } from 'vitest'
import { and, desc, eq, isNull, sql } from 'drizzle-orm'
import nodemailer from 'nodemailer'
import { encode } from 'next-auth/jwt'
import { closeDb, useDb } from '../../server/db/client'
import { apiTokens, auditLog, firms, mailboxMessages, memberships, passwordResets, projects, rateLimits, users } from '../../server/db/schema'
import { hashPassword } from '../../server/services/passwords'
import { as, Client, DEMO } from '../support/http'
import { appPort, baseUrl, smtpPort } from '../support/env'
import { mailTo } from '../support/mail'
import { projectWithNetwork, DEMO_CSV } from './adjustments-fixture'

afterAll(() => closeDb())

const stamp = () => `${Date.now()}-${Math.random().toString(36).slice(2, 8)}`
const F = `/api/firms/${DEMO.firm}`

async function newPerson(label: string, password: string, opts: { firm?: string; role?: 'owner' | 'party_chief' | 'licensed_surveyor' } = {}) {
  const email = `${label}-${stamp()}@tiepoint.test`
  const [u] = await useDb().insert(users).values({
    email, name: `Test ${label}`, passwordHash: await hashPassword(password),
    licenceNumber: opts.role === 'licensed_surveyor' ? 'LS-TEST-9' : null, licenceJurisdiction: opts.role === 'licensed_surveyor' ? 'Test Board (invented)' : null,
  }).returning()
  if (opts.firm) {
    const [f] = await useDb().select().from(firms).where(eq(firms.slug, opts.firm))
    await useDb().insert(memberships).values({ firmId: f!.id, userId: u!.id, role: opts.role ?? 'party_chief' })
  }
  return { email, id: u!.id }
}

async function personEvents(userId: number) {
  return useDb().select().from(auditLog).where(and(isNull(auditLog.firmId), eq(auditLog.userId, userId))).orderBy(desc(auditLog.id))
}
const projectCount = async (name: string) => (await useDb().select().from(projects).where(eq(projects.name, name))).length

// ── 1. mail ─────────────────────────────────────────────────────────────────

describe('mail: nobody reads a message addressed to someone else', () => {
  it('regression (account takeover): another firm invites chief@, asks for chief\'s reset link and cannot read it', async () => {
    const attacker = await as(DEMO.other)
    // The attack of the issue: invite the victim's address into one's own firm, then ask for the victim's reset.
    const inv = await attacker.post(`/api/firms/${DEMO.otherFirm}/invitations`, { email: DEMO.chief, role: 'client' })
    expect(inv.status, JSON.stringify(inv.body)).toBe(201)
    expect((await new Client().post('/api/password-reset/request', { email: DEMO.chief })).status).toBe(202)
    const reset = await mailTo(DEMO.chief).then(async (m) => (m.subject.includes('Reset') ? m : (await waitForSubject(DEMO.chief, 'Reset'))))
    expect(reset.text).toMatch(/\/reset\//)
    // Neither the firm mailbox of old nor the attacker's own mailbox shows it.
    expect((await attacker.get(`/api/firms/${DEMO.otherFirm}/mailbox`)).status).toBe(404)
    const own = await attacker.get('/api/me/mailbox')
    expect(own.status).toBe(200)
    expect(JSON.stringify(own.body)).not.toContain('/reset/')
    expect(own.body.some((m: { to: string }) => m.to.includes(DEMO.chief))).toBe(false)
    // The victim does see it in their own mailbox.
    const victim = await (await as(DEMO.chief)).get('/api/me/mailbox')
    expect(victim.body.some((m: { id: number }) => m.id === reset.id)).toBe(true)
  })

  it('recipients are compared whole: an address that is part of another one sees nothing of it', async () => {
    const victim = await newPerson('mbx-victim', 'victim password 1')
    // "victim-…@tiepoint.test" is a substring of the victim's address "mbx-victim-…@tiepoint.test"
    const part = await newPerson('x', 'part password 1')
    const partEmail = victim.email.slice(4)
    await useDb().update(users).set({ email: partEmail }).where(eq(users.id, part.id))
    expect(victim.email.includes(partEmail)).toBe(true)
    await new Client().post('/api/password-reset/request', { email: victim.email })
    await mailTo(victim.email)
    const box = await (await as(partEmail, 'part password 1')).get('/api/me/mailbox')
    expect(box.status).toBe(200)
    expect(box.body).toEqual([])
  })

  it('the inviter sees the invitation link once, in the answer that creates it', async () => {
    const owner = await as(DEMO.owner)
    const email = `linkonce-${stamp()}@tiepoint.test`
    const r = await owner.post(`${F}/invitations`, { email, role: 'client' })
    expect(r.status).toBe(201)
    expect(r.body.link).toMatch(new RegExp(`^${baseUrl}/invite/tpi_[A-Za-z0-9_-]+$`))
    const mail = await mailTo(email)
    expect(mail.text).toContain(r.body.link)
    const list = await owner.get(`${F}/invitations`)
    expect(JSON.stringify(list.body)).not.toContain('tpi_')
  })

  it('a non-loopback HOST without SMTP_URL refuses to start and says why', async () => {
    const env: Record<string, string | undefined> = { ...process.env, HOST: '0.0.0.0', NITRO_HOST: '0.0.0.0', PORT: String(appPort + 7), NITRO_PORT: String(appPort + 7), NODE_ENV: 'production' }
    delete env.SMTP_URL
    delete env.TIEPOINT_DEV_MAILBOX
    const child = spawn('node', [`${process.env.NUXT_OUTPUT_DIR || '.output'}/server/index.mjs`], { env, stdio: ['ignore', 'pipe', 'pipe'] })
    let out = ''
    child.stdout.on('data', (d) => { out += d })
    child.stderr.on('data', (d) => { out += d })
    const code = await new Promise<number | null>((resolve) => {
      const t = setTimeout(() => { child.kill('SIGKILL'); resolve(null) }, 20_000)
      child.on('exit', (c) => { clearTimeout(t); resolve(c) })
    })
    expect(code).toBe(78)
    expect(out).toMatch(/refusing to start.*SMTP_URL/s)
  })

  it('the development SMTP server refuses a message over its size cap', async () => {
    const t = nodemailer.createTransport({ host: '127.0.0.1', port: smtpPort, secure: false, ignoreTLS: true })
    const to = `big-${stamp()}@tiepoint.test`
    await expect(t.sendMail({ from: 'x@tiepoint.test', to, subject: 'big', text: 'x'.repeat(2 * 1024 * 1024) })).rejects.toThrow(/552|size|exceed/i)
    const rows = await useDb().select().from(mailboxMessages).where(sql`${to} = any(${mailboxMessages.recipients})`)
    expect(rows).toEqual([])
  })
})

async function waitForSubject(email: string, subject: string) {
  for (let i = 0; i < 50; i++) {
    const [m] = await useDb().select().from(mailboxMessages)
      .where(and(sql`${email} = any(${mailboxMessages.recipients})`, sql`${mailboxMessages.subject} like ${'%' + subject + '%'}`))
      .orderBy(desc(mailboxMessages.id)).limit(1)
    if (m) return m
    await new Promise((r) => setTimeout(r, 200))
  }
  throw new Error(`no "${subject}" mail to ${email}`)
}

// ── 3. body caps ────────────────────────────────────────────────────────────

/** Sends a body in chunks without Content-Length (Transfer-Encoding: chunked). */
function chunked(path: string, type: string, chunks: number, chunkBytes: number): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = httpRequest({ host: '127.0.0.1', port: appPort, path, method: 'POST', headers: { 'content-type': type, origin: baseUrl } }, (res) => {
      let body = ''
      res.on('data', (d) => { body += d })
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }))
    })
    req.on('error', (e) => reject(e))
    let i = 0
    const piece = Buffer.alloc(chunkBytes, 0x61)
    const write = () => {
      while (i < chunks) {
        i++
        if (!req.write(piece)) { req.once('drain', write); return }
      }
      req.end()
    }
    write()
  })
}

describe('body caps: 1 MB for JSON and urlencoded bodies, before parsing', () => {
  it('regression: a 6 MB JSON body to an unauthenticated route answers 413 with a message', async () => {
    const r = await new Client().post('/api/password-reset/request', JSON.stringify({ email: 'a@tiepoint.test', pad: 'x'.repeat(6 * 1024 * 1024) }))
    expect(r.status).toBe(413)
    expect(r.body.message).toMatch(/larger than 1024 KB/)
  })
  it('a chunked body (no Content-Length) is counted as it arrives: 2 MB → 413', async () => {
    const r = await chunked('/api/password-reset/request', 'application/json', 32, 64 * 1024)
    expect(r.status).toBe(413)
    expect(JSON.parse(r.body).message).toMatch(/larger than/)
  })
  it('an urlencoded 2 MB body to the sign-in route answers 413', async () => {
    const r = await new Client().raw('/api/auth/callback/credentials', {
      method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: `email=a&password=${'x'.repeat(2 * 1024 * 1024)}`,
    })
    expect(r.status).toBe(413)
  })
  it('uploads keep their own, larger cap: a 1.5 MB multipart control file is read (422 for its lines), not refused', async () => {
    const chief = await as(DEMO.chief)
    const { projectId } = await projectWithNetwork(DEMO.firm, 'Cap probe', DEMO_CSV)
    const form = new FormData()
    form.append('file', new Blob([`name,east,north\nP,notanumber,${'9'.repeat(1_500_000)}\n`]), 'control.csv')
    const r = await chief.request('POST', `${F}/projects/${projectId}/stations/import`, form)
    expect(r.status, JSON.stringify(r.body).slice(0, 300)).toBe(422)
  })
})

// ── 5. same origin ──────────────────────────────────────────────────────────

describe('same origin: cookie-authenticated changes only from the app itself', () => {
  it('regression: a POST with Origin: http://attacker.invalid is refused (403) and nothing is created', async () => {
    const chief = await as(DEMO.chief)
    const name = `cross-origin ${stamp()}`
    const r = await chief.raw(`${F}/projects`, {
      method: 'POST', headers: { origin: 'http://attacker.invalid', 'content-type': 'application/json' }, body: JSON.stringify({ name, crs: 'local', units: 'm' }),
    })
    expect(r.status).toBe(403)
    expect((await r.json()).message).toMatch(/another site/)
    expect(await projectCount(name)).toBe(0)
  })
  it('without Origin, Sec-Fetch-Site: cross-site is refused; with neither header a cookie change is refused', async () => {
    const chief = await as(DEMO.chief)
    const name = `no-origin ${stamp()}`
    const body = JSON.stringify({ name, crs: 'local', units: 'm' })
    const site = await chief.raw(`${F}/projects`, { method: 'POST', headers: { origin: '', 'sec-fetch-site': 'cross-site', 'content-type': 'application/json' }, body })
    expect(site.status).toBe(403)
    // undici drops an empty Origin header, so this request carries neither
    const none = await fetch(`${baseUrl}${F}/projects`, { method: 'POST', headers: { cookie: [...chief.cookies].map(([k, v]) => `${k}=${v}`).join('; '), 'content-type': 'application/json' }, body })
    expect(none.status).toBe(403)
    expect(await projectCount(name)).toBe(0)
  })
  it('a plain HTML form (urlencoded) to a JSON route is refused with 415, even from the app\'s origin', async () => {
    const chief = await as(DEMO.chief)
    const name = `form post ${stamp()}`
    const r = await chief.raw(`${F}/projects`, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: `name=${encodeURIComponent(name)}&crs=local&units=m` })
    expect(r.status).toBe(415)
    const plain = await chief.raw(`${F}/projects`, { method: 'POST', headers: { 'content-type': 'text/plain' }, body: JSON.stringify({ name, crs: 'local', units: 'm' }) })
    expect(plain.status).toBe(415)
    expect(await projectCount(name)).toBe(0)
  })
  it('uploads take multipart only; JSON routes refuse multipart', async () => {
    const chief = await as(DEMO.chief)
    const { projectId } = await projectWithNetwork(DEMO.firm, 'Type probe', DEMO_CSV)
    const json = await chief.post(`${F}/projects/${projectId}/observation-sets`, { file: 'kind,at\n' })
    expect(json.status).toBe(415)
    const form = new FormData()
    form.append('name', 'x')
    expect((await chief.request('POST', `${F}/projects`, form)).status).toBe(415)
  })
  it('a bearer-token request is not subject to the origin rule', async () => {
    const p = await newPerson('bearer-origin', 'bearer password 1', { firm: DEMO.firm, role: 'party_chief' })
    const token = (await (await as(p.email, 'bearer password 1')).post('/api/me/tokens', { name: 'script' })).body.token as string
    const name = `bearer ${stamp()}`
    const r = await new Client(token).raw(`${F}/projects`, {
      method: 'POST', headers: { origin: 'http://attacker.invalid', 'content-type': 'application/json' }, body: JSON.stringify({ name, crs: 'local', units: 'm' }),
    })
    expect(r.status).toBe(201)
    expect(await projectCount(name)).toBe(1)
  })
})

// ── 6. headers ──────────────────────────────────────────────────────────────

describe('security headers on every response', () => {
  it('a page: CSP whose nonce is on every inline script, frame-ancestors none, nosniff, referrer and permissions policies', async () => {
    const res = await fetch(`${baseUrl}/signin`)
    const html = await res.text()
    const csp = res.headers.get('content-security-policy') ?? ''
    const nonce = /'nonce-([A-Za-z0-9+/=]+)'/.exec(csp)?.[1]
    expect(nonce).toBeTruthy()
    expect(csp).toMatch(/script-src 'self' 'nonce-/)
    expect(csp).not.toMatch(/unsafe-inline[^;]*;?\s*$|script-src[^;]*unsafe-inline/)
    expect(csp).toContain("frame-ancestors 'none'")
    // no map-tile host for a signed-out visitor
    expect(csp).toMatch(/img-src 'self' data: blob:;/)
    const inline = [...html.matchAll(/<script(?![^>]*\ssrc=)([^>]*)>/g)]
    expect(inline.length).toBeGreaterThan(0)
    for (const m of inline) expect(m[1]).toContain(`nonce="${nonce}"`)
    expect(res.headers.get('x-content-type-options')).toBe('nosniff')
    expect(res.headers.get('referrer-policy')).toBe('strict-origin-when-cross-origin')
    expect(res.headers.get('permissions-policy')).toMatch(/camera=\(\)/)
    expect(res.headers.get('x-frame-options')).toBe('DENY')
    // served over http here: no HSTS
    expect(res.headers.get('strict-transport-security')).toBeNull()
    // a fresh nonce per response
    const again = (await fetch(`${baseUrl}/signin`)).headers.get('content-security-policy')
    expect(again).not.toBe(csp)
  })
  it('API answers and static files carry the fixed headers and a CSP that runs nothing', async () => {
    for (const path of ['/api/health', '/api/me', '/favicon.svg']) {
      const res = await fetch(`${baseUrl}${path}`)
      await res.arrayBuffer()
      expect(res.headers.get('x-content-type-options'), path).toBe('nosniff')
      expect(res.headers.get('content-security-policy'), path).toMatch(/^default-src 'none';.*frame-ancestors 'none'/)
      expect(res.headers.get('referrer-policy'), path).toBe('strict-origin-when-cross-origin')
    }
  })
  it('the firm\'s map-tile host is allowed only for its members', async () => {
    const [f] = await useDb().select().from(firms).where(eq(firms.slug, DEMO.otherFirm))
    const before = f!.settings
    await useDb().update(firms).set({ settings: { ...before, tileUrl: 'https://{s}.tiles.example.test/{z}/{x}/{y}.png' } }).where(eq(firms.id, f!.id))
    try {
      const member = await as(DEMO.other)
      const mine = (await member.raw('/profile')).headers.get('content-security-policy') ?? ''
      expect(mine).toContain('https://*.tiles.example.test')
      const outsider = await as(DEMO.chief)
      const theirs = (await outsider.raw('/profile')).headers.get('content-security-policy') ?? ''
      expect(theirs).not.toContain('tiles.example.test')
    } finally {
      await useDb().update(firms).set({ settings: before }).where(eq(firms.id, f!.id))
    }
  })
})

// ── 4. sessions ─────────────────────────────────────────────────────────────

describe('sessions', () => {
  it('regression: a password change ends every other session of the person; the changing session goes on', async () => {
    const p = await newPerson('sessions', 'session password 1')
    const a = await as(p.email, 'session password 1')
    const b = await as(p.email, 'session password 1')
    const r = await a.post('/api/me/password', { current: 'session password 1', next: 'session password 2' })
    expect(r.status).toBe(200)
    expect((await a.get('/api/me')).status).toBe(200)
    const other = await b.get('/api/me')
    expect(other.status).toBe(401)
    expect(other.body.message).toMatch(/password was changed/)
    expect((await b.post(`${F}/projects`, { name: 'x', crs: 'local', units: 'm' })).status).toBe(401)
  })

  it('a reset ends every session, revokes every API token and every other open reset link', async () => {
    const p = await newPerson('reset-all', 'reset password 1')
    const session = await as(p.email, 'reset password 1')
    const token = (await session.post('/api/me/tokens', { name: 'laptop' })).body.token as string
    expect((await new Client(token).get('/api/me')).status).toBe(200)
    await new Client().post('/api/password-reset/request', { email: p.email })
    const first = (await mailTo(p.email)).text.match(/\/reset\/([A-Za-z0-9_-]+)/)![1]!
    await new Client().post('/api/password-reset/request', { email: p.email })
    let second = first
    for (let i = 0; i < 50 && second === first; i++) {
      second = (await mailTo(p.email)).text.match(/\/reset\/([A-Za-z0-9_-]+)/)![1]!
      if (second === first) await new Promise((r) => setTimeout(r, 200))
    }
    expect(second).not.toBe(first)
    expect((await new Client().post('/api/password-reset/confirm', { token: second, password: 'reset password 2' })).status).toBe(200)
    expect((await session.get('/api/me')).status).toBe(401)
    expect((await new Client(token).get('/api/me')).status).toBe(401)
    expect((await new Client().post('/api/password-reset/confirm', { token: first, password: 'reset password 3' })).status).toBe(404)
    const open = await useDb().select().from(passwordResets).where(and(eq(passwordResets.userId, p.id), isNull(passwordResets.usedAt)))
    expect(open).toEqual([])
    const live = await useDb().select().from(apiTokens).where(and(eq(apiTokens.userId, p.id), isNull(apiTokens.revokedAt)))
    expect(live).toEqual([])
  })

  it('a session ends 12 hours after sign-in however active it was', async () => {
    const p = await newPerson('absolute', 'absolute password 1')
    const secret = process.env.AUTH_SECRET!
    const cookieFor = async (hoursAgo: number) => `next-auth.session-token=${await encode({
      token: { uid: p.id, sv: 0, sat: Math.floor(Date.now() / 1000) - hoursAgo * 3600, email: p.email }, secret, maxAge: 24 * 3600,
    })}`
    const fresh = await fetch(`${baseUrl}/api/me`, { headers: { cookie: await cookieFor(11.9) } })
    expect(fresh.status).toBe(200)
    const old = await fetch(`${baseUrl}/api/me`, { headers: { cookie: await cookieFor(12.1) } })
    expect(old.status).toBe(401)
    expect((await old.json()).message).toMatch(/12 hours/)
  })
})

// ── 8. signing ──────────────────────────────────────────────────────────────

describe('signing needs a browser session, and its password check is throttled', () => {
  it('an API token cannot sign (403); wrong signing passwords meet the sign-in backoff (429)', async () => {
    const s = await newPerson('signer', 'signer password 1', { firm: DEMO.firm, role: 'licensed_surveyor' })
    const session = await as(s.email, 'signer password 1')
    const token = (await session.post('/api/me/tokens', { name: 'sign probe' })).body.token as string
    const { projectId } = await projectWithNetwork(DEMO.firm, 'Sign probe', DEMO_CSV)
    const path = `${F}/projects/${projectId}/adjustments/1/signoffs`
    const body = { statement: 'I certify these control coordinates.', password: 'signer password 1' }
    const viaToken = await new Client(token).post(path, body)
    expect(viaToken.status).toBe(403)
    expect(viaToken.body.message).toMatch(/browser session/)
    const statuses: number[] = []
    for (let i = 0; i < 7; i++) statuses.push((await session.post(path, { ...body, password: `wrong ${i}` })).status)
    expect(statuses.slice(0, 5)).toEqual([422, 422, 422, 422, 422])
    expect(statuses[6]).toBe(429)
  })
})

// ── 9. throttle ─────────────────────────────────────────────────────────────

describe('sign-in throttle: backoff, shared in PostgreSQL, by the socket address', () => {
  it('after the free failures the wait is short and grows; the right password works once it has passed', async () => {
    const p = await newPerson('backoff', 'backoff password 1')
    for (let i = 0; i < 6; i++) await new Client().signIn(p.email, `wrong ${i}`)
    const c = new Client()
    const csrf = await c.get('/api/auth/csrf')
    const blocked = await c.raw('/api/auth/callback/credentials', {
      method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, email: p.email, password: 'backoff password 1', json: 'true' }),
    })
    expect(blocked.status).toBe(429)
    const wait = Number(blocked.headers.get('retry-after'))
    expect(wait).toBeGreaterThanOrEqual(1)
    expect(wait).toBeLessThanOrEqual(2)
    await new Promise((r) => setTimeout(r, wait * 1000 + 200))
    expect((await (await as(p.email, 'backoff password 1')).get('/api/me')).status).toBe(200)
  })

  it('counters live in PostgreSQL, keyed by the socket address even when the client sends X-Forwarded-For', async () => {
    const p = await newPerson('ipkey', 'ipkey password 1')
    const c = new Client()
    const csrf = await c.get('/api/auth/csrf')
    await (await c.raw('/api/auth/callback/credentials', {
      method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-forwarded-for': '198.51.100.77' },
      body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, email: p.email, password: 'wrong', json: 'true' }),
    })).text()
    const keys = (await useDb().select({ key: rateLimits.key }).from(rateLimits)).map((r) => r.key)
    expect(keys).toContain(`signin-fail:a:${p.email}`)
    expect(keys).toContain('signin-fail:ip:127.0.0.1')
    expect(keys.some((k) => k.includes('198.51.100.77'))).toBe(false)
    const [fail] = await personEvents(p.id)
    expect(fail!.action).toBe('signin.failure')
    expect((fail!.after as { ip: string }).ip).toBe('127.0.0.1')
  })
})

// ── 13. hygiene ─────────────────────────────────────────────────────────────

describe('input hygiene', () => {
  const chief = () => as(DEMO.chief)
  it('NUL in a JSON text field answers 422 naming the field, not 500', async () => {
    const name = `nul ${stamp()}`
    const r = await (await chief()).post(`${F}/projects`, { name, crs: 'local', units: 'm', description: 'a\u0000b' })
    expect(r.status).toBe(422)
    expect(r.body.errors[0].field).toBe('description')
    expect(await projectCount(name)).toBe(0)
  })
  it('an unpaired surrogate answers 422 naming the field', async () => {
    const r = await (await chief()).post(`${F}/projects`, `{"name":"lone \\ud800 half","crs":"local","units":"m"}`)
    expect(r.status).toBe(422)
    expect(r.body.errors[0].field).toBe('name')
  })
  it('names refuse control characters', async () => {
    const r = await (await chief()).post(`${F}/projects`, { name: 'Bridge\u0007\u001b[31m', crs: 'local', units: 'm' })
    expect(r.status).toBe(422)
    expect(r.body.errors[0].field).toBe('name')
    const p = await newPerson('ctrlname', 'ctrl password 12')
    const me = await as(p.email, 'ctrl password 12')
    expect((await me.patch('/api/me', { name: 'Line\nbreak' })).status).toBe(422)
  })
  it('page and offset are bounded', async () => {
    const { projectId } = await projectWithNetwork(DEMO.firm, 'Paging probe', DEMO_CSV)
    const c = await chief()
    expect((await c.get(`${F}/projects/${projectId}/observations?page=1000000000`)).status).toBe(422)
    const owner = await as(DEMO.owner)
    expect((await owner.get(`${F}/audit?offset=99999999999`)).status).toBe(422)
  })
})

// ── 14. audit completeness ──────────────────────────────────────────────────

describe('audit: person-level events are recorded and shown to the person', () => {
  it('sign-in success and failure, profile and licence edit, token create and revoke, password change, mailbox read', async () => {
    const p = await newPerson('audited', 'audited password 1')
    await new Client().signIn(p.email, 'not it')
    const c = await as(p.email, 'audited password 1')
    await c.patch('/api/me', { name: 'Audited Person', licenceNumber: 'LS-77' })
    const t = (await c.post('/api/me/tokens', { name: 'audit token' })).body
    await c.delete(`/api/me/tokens/${t.id}`)
    await c.get('/api/me/mailbox')
    await c.post('/api/me/password', { current: 'audited password 1', next: 'audited password 2' })
    const actions = (await personEvents(p.id)).map((e) => e.action)
    for (const a of ['signin.failure', 'signin.success', 'profile.update', 'token.create', 'token.revoke', 'mailbox.read', 'password.change']) {
      expect(actions, a).toContain(a)
    }
    const profile = (await personEvents(p.id)).find((e) => e.action === 'profile.update')!
    expect(profile.before).toMatchObject({ name: 'Test audited', licenceNumber: null })
    expect(profile.after).toMatchObject({ name: 'Audited Person', licenceNumber: 'LS-77' })
    // shown to the person, and to nobody else
    const shown = await c.get('/api/me/activity')
    expect(shown.status).toBe(200)
    expect(shown.body.map((e: { action: string }) => e.action)).toEqual(expect.arrayContaining(['signin.success', 'token.create', 'password.change']))
    expect(JSON.stringify(shown.body)).not.toContain(t.token)
    const other = await (await as(DEMO.owner)).get('/api/me/activity')
    expect(other.body.some((e: { id: number }) => shown.body[0].id === e.id)).toBe(false)
    // not in any firm's log
    const firmLog = await (await as(DEMO.owner)).get(`${F}/audit?action=token.`)
    expect(firmLog.body.entries).toEqual([])
  })

  it('a password reset is recorded', async () => {
    const p = await newPerson('audit-reset', 'reset audit pw 1')
    await new Client().post('/api/password-reset/request', { email: p.email })
    const token = (await mailTo(p.email)).text.match(/\/reset\/([A-Za-z0-9_-]+)/)![1]!
    await new Client().post('/api/password-reset/confirm', { token, password: 'reset audit pw 2' })
    expect((await personEvents(p.id)).map((e) => e.action)).toContain('password.reset')
  })

  it('downloads of originals and run exports, and run failures, are in the firm log', async () => {
    const chief = await as(DEMO.chief)
    const { projectId, setId, firmId } = await projectWithNetwork(DEMO.firm, 'Audit downloads', DEMO_CSV)
    const base = `${F}/projects/${projectId}`
    expect((await chief.raw(`${base}/observation-sets/${setId}/file`)).status).toBe(200)
    const q = await chief.post(`${base}/adjustments`, {})
    expect(q.status).toBe(202)
    let status = ''
    for (let i = 0; i < 240 && !['done', 'failed'].includes(status); i++) {
      status = (await chief.get(`${base}/adjustments/${q.body.number}/status`)).body.status
      if (!['done', 'failed'].includes(status)) await new Promise((r) => setTimeout(r, 250))
    }
    expect(status).toBe('done')
    expect((await chief.raw(`${base}/adjustments/${q.body.number}/export/coordinates.csv`)).status).toBe(200)
    const rows = async (pid: number) => useDb().select().from(auditLog).where(and(eq(auditLog.firmId, firmId), eq(auditLog.projectId, pid)))
    const actions = (await rows(projectId)).map((r) => r.action)
    expect(actions).toContain('observation_set.download')
    expect(actions).toContain('adjustment.export')
    // a network without control cannot be solved: the run fails, and the failure is logged
    const csv = 'kind,at,from,to,value,unit,sigma,hi,ht,set,length,note\nhorizontal_distance,A,,B,100.000,m,,,,,,\nhorizontal_distance,B,,C,120.000,m,,,,,,\nhorizontal_distance,A,,C,150.000,m,,,,,,\n'
    const bad = await projectWithNetwork(DEMO.firm, 'Audit failure', csv)
    const f = await chief.post(`${F}/projects/${bad.projectId}/adjustments`, {})
    expect(f.status).toBe(202)
    let failed: { action: string; after: unknown } | undefined
    for (let i = 0; i < 240 && !failed; i++) {
      failed = (await rows(bad.projectId)).find((r) => r.action === 'adjustment.fail')
      if (!failed) await new Promise((r) => setTimeout(r, 250))
    }
    expect(failed?.after).toMatchObject({ number: f.body.number, reason: expect.stringMatching(/control/) })
  })
})
