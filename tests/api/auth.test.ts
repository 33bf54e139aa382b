// Sign-in, throttling, password reset and profile, against the real server.
// Each test that changes a password works on a person created for it, so the
// demo accounts stay usable for every other test.
import { afterAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { passwordResets, users } from '../../server/db/schema'
import { hashPassword, sha256Hex } from '../../server/services/passwords'
import { as, Client, DEMO } from '../support/http'
import { baseUrl } from '../support/env'
import { mailTo } from '../support/mail'

afterAll(() => closeDb())

const stamp = () => `${Date.now()}-${Math.random().toString(36).slice(2, 8)}`

async function newPerson(label: string, password: string): Promise<string> {
  const email = `${label}-${stamp()}@tiepoint.test`
  await useDb().insert(users).values({ email, name: `Test ${label}`, passwordHash: await hashPassword(password) })
  return email
}


describe('sign-in', () => {
  // Expected roles: the demo people of server/db/seed.ts, one per role of docs/architecture.md.
  const cases: [string, string, string][] = [
    [DEMO.owner, DEMO.firm, 'owner'],
    [DEMO.chief, DEMO.firm, 'party_chief'],
    [DEMO.crew, DEMO.firm, 'field_crew'],
    [DEMO.surveyor, DEMO.firm, 'licensed_surveyor'],
    [DEMO.client, DEMO.firm, 'client'],
    [DEMO.other, DEMO.otherFirm, 'owner'],
  ]
  for (const [email, firm, role] of cases) {
    it(`${email} signs in and /api/me shows ${role} in ${firm}`, async () => {
      const c = await as(email)
      const me = await c.get('/api/me')
      expect(me.status).toBe(200)
      expect(me.body.user.email).toBe(email)
      expect(me.body.user).not.toHaveProperty('passwordHash')
      expect(me.body.firms).toEqual([expect.objectContaining({ slug: firm, role })])
    })
  }

  it('without a session /api/me answers 401', async () => {
    const r = await new Client().get('/api/me')
    expect(r.status).toBe(401)
    expect(r.body.message).toMatch(/sign in/i)
  })

  it('a wrong password gives no session', async () => {
    const email = await newPerson('wrongpw', 'the right password')
    const c = new Client()
    await c.signIn(email, 'not the password')
    expect((await c.get('/api/me')).status).toBe(401)
  })

  it('11 wrong passwords in a row are throttled: even the right password is then refused', async () => {
    const email = await newPerson('throttle', 'the right password')
    const statuses: number[] = []
    for (let i = 0; i < 11; i++) statuses.push(await new Client().signIn(email, `wrong guess ${i}`))
    // The first attempts reach the password check; by the eleventh the account is throttled.
    expect(statuses[0]).not.toBe(429)
    expect(statuses[10]).toBe(429)
    const c = new Client()
    expect(await c.signIn(email, 'the right password')).toBe(429)
    expect((await c.get('/api/me')).status).toBe(401)
  })
})

describe('password reset', () => {
  it('answers 202 with the same message whether or not the address has an account', async () => {
    const email = await newPerson('reset-same', 'the old password')
    const known = await new Client().post('/api/password-reset/request', { email })
    const unknown = await new Client().post('/api/password-reset/request', { email: `nobody-${stamp()}@tiepoint.test` })
    expect(known.status).toBe(202)
    expect(unknown.status).toBe(202)
    expect(unknown.body).toEqual(known.body)
  })

  it('works end to end, once, and stores only the hash of the link', async () => {
    const email = await newPerson('reset', 'the old password')
    expect((await new Client().post('/api/password-reset/request', { email: email.toUpperCase() })).status).toBe(202)
    const mail = await mailTo(email)
    const link = mail.text.match(/(https?:\/\/\S+\/reset\/([A-Za-z0-9_-]+))/)
    expect(link, mail.text).not.toBeNull()
    expect(link![1]!.startsWith(`${baseUrl}/reset/`)).toBe(true)
    const token = link![2]!

    const [u] = await useDb().select().from(users).where(eq(users.email, email))
    const resets = await useDb().select().from(passwordResets).where(eq(passwordResets.userId, u!.id))
    expect(resets.map((r) => r.tokenHash)).toContain(sha256Hex(token))
    expect(JSON.stringify(resets)).not.toContain(token)
    const ours = resets.find((r) => r.tokenHash === sha256Hex(token))!
    const minutes = (ours.expiresAt.getTime() - ours.createdAt.getTime()) / 60_000
    expect(minutes).toBeGreaterThan(59)
    expect(minutes).toBeLessThanOrEqual(60.1)

    const short = await new Client().post('/api/password-reset/confirm', { token, password: 'short' })
    expect(short.status).toBe(422)
    expect(short.body.errors[0].field).toBe('password')

    const ok = await new Client().post('/api/password-reset/confirm', { token, password: 'a brand new password' })
    expect(ok.status).toBe(200)
    const again = await new Client().post('/api/password-reset/confirm', { token, password: 'another new password' })
    expect(again.status).toBe(404)

    const c = new Client()
    await c.signIn(email, 'a brand new password')
    expect((await c.get('/api/me')).status).toBe(200)
    const old = new Client()
    await old.signIn(email, 'the old password')
    expect((await old.get('/api/me')).status).toBe(401)
  })

  it('refuses a made-up token', async () => {
    const r = await new Client().post('/api/password-reset/confirm', { token: 'tpr_madeup', password: 'a brand new password' })
    expect(r.status).toBe(404)
    expect(r.body.message).toMatch(/not valid/)
  })
})

describe('profile', () => {
  it('updates name and licence details; empty licence fields clear them', async () => {
    const email = await newPerson('profile', 'profile password 1')
    const c = await as(email, 'profile password 1')
    const r = await c.patch('/api/me', { name: 'Renamed Person', licenceNumber: 'LS-TEST-1', licenceJurisdiction: 'Test Board (invented)' })
    expect(r.status).toBe(200)
    expect(r.body).toMatchObject({ name: 'Renamed Person', licenceNumber: 'LS-TEST-1', licenceJurisdiction: 'Test Board (invented)' })
    expect((await c.get('/api/me')).body.user.name).toBe('Renamed Person')
    const cleared = await c.patch('/api/me', { licenceNumber: '', licenceJurisdiction: '' })
    expect(cleared.body).toMatchObject({ name: 'Renamed Person', licenceNumber: null, licenceJurisdiction: null })
    expect((await new Client().patch('/api/me', { name: 'x' })).status).toBe(401)
  })

  it('changes the password only with the current one', async () => {
    const email = await newPerson('pwchange', 'profile password 1')
    const c = await as(email, 'profile password 1')
    const wrong = await c.post('/api/me/password', { current: 'not my password', next: 'profile password 2' })
    expect(wrong.status).toBe(422)
    expect(wrong.body.errors[0].field).toBe('current')
    const weak = await c.post('/api/me/password', { current: 'profile password 1', next: 'short' })
    expect(weak.status).toBe(422)
    expect(weak.body.errors[0].field).toBe('next')
    const ok = await c.post('/api/me/password', { current: 'profile password 1', next: 'profile password 2' })
    expect(ok.status).toBe(200)
    const fresh = await as(email, 'profile password 2')
    expect((await fresh.get('/api/me')).status).toBe(200)
  })
})
