// Members, invitations and the development mailbox, against the real server.
// Every change is made to people created for the test; the demo people keep
// their roles.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, desc, eq } from 'drizzle-orm'
import { closeDb, useDb } from '../../server/db/client'
import { auditLog, firms, invitations, memberships, users } from '../../server/db/schema'
import { hashPassword, sha256Hex } from '../../server/services/passwords'
import { as, Client, DEMO } from '../support/http'
import { baseUrl } from '../support/env'
import { mailTo } from '../support/mail'

afterAll(() => closeDb())

const stamp = () => `${Date.now()}-${Math.random().toString(36).slice(2, 8)}`
let owner: Client
let larchmereId: number

beforeAll(async () => {
  owner = await as(DEMO.owner)
  const [f] = await useDb().select().from(firms).where(eq(firms.slug, DEMO.firm))
  larchmereId = f!.id
})


/** Invites an address and returns the one-time token from the e-mail it receives. */
async function invite(email: string, role: string): Promise<string> {
  const r = await owner.post(`/api/firms/${DEMO.firm}/invitations`, { email, role })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  const mail = await mailTo(email)
  const link = mail.text.match(/(https?:\/\/\S+\/invite\/([A-Za-z0-9_-]+))/)
  expect(link, mail.text).not.toBeNull()
  expect(link![1]!.startsWith(`${baseUrl}/invite/`)).toBe(true)
  return link![2]!
}

async function lastAudit(action: string) {
  const [a] = await useDb().select().from(auditLog).where(and(eq(auditLog.firmId, larchmereId), eq(auditLog.action, action))).orderBy(desc(auditLog.id)).limit(1)
  return a
}

describe('listing members', () => {
  it('any staff member sees the members with their roles', async () => {
    for (const who of [DEMO.owner, DEMO.crew]) {
      const r = await (await as(who)).get(`/api/firms/${DEMO.firm}/members`)
      expect(r.status).toBe(200)
      const byEmail = Object.fromEntries(r.body.map((m: { email: string; role: string }) => [m.email, m.role]))
      expect(byEmail[DEMO.owner]).toBe('owner')
      expect(byEmail[DEMO.crew]).toBe('field_crew')
      expect(byEmail[DEMO.other]).toBeUndefined()
      expect(JSON.stringify(r.body)).not.toMatch(/passwordHash|\$2[aby]\$/)
    }
  })
  it('a client sees nothing of the firm (404)', async () => {
    expect((await (await as(DEMO.client)).get(`/api/firms/${DEMO.firm}/members`)).status).toBe(404)
  })
})

describe('roles that may not act get 403', () => {
  it('field crew may not create a project', async () => {
    const r = await (await as(DEMO.crew)).post(`/api/firms/${DEMO.firm}/projects`, { name: 'Crew project', crs: 'local', units: 'm' })
    expect(r.status).toBe(403)
  })
  it('field crew and party chief may not change or remove members, nor invite', async () => {
    const members = (await owner.get(`/api/firms/${DEMO.firm}/members`)).body as { id: number; email: string }[]
    const crewMember = members.find((m) => m.email === DEMO.crew)!
    for (const who of [DEMO.crew, DEMO.chief]) {
      const c = await as(who)
      expect((await c.patch(`/api/firms/${DEMO.firm}/members/${crewMember.id}`, { role: 'owner' })).status).toBe(403)
      expect((await c.delete(`/api/firms/${DEMO.firm}/members/${crewMember.id}`)).status).toBe(403)
      expect((await c.post(`/api/firms/${DEMO.firm}/invitations`, { email: `x-${stamp()}@tiepoint.test`, role: 'owner' })).status).toBe(403)
    }
    const [row] = await useDb().select().from(memberships).where(eq(memberships.id, crewMember.id))
    expect(row!.role).toBe('field_crew')
  })
})

describe('invitations', () => {
  it('e-mail arrives, the link shows the offer, sets a password once, and sign-in works', async () => {
    const email = `invitee-${stamp()}@tiepoint.test`
    const token = await invite(email, 'field_crew')

    const [inv] = await useDb().select().from(invitations).where(eq(invitations.email, email))
    expect(inv!.tokenHash).toBe(sha256Hex(token))
    const days = (inv!.expiresAt.getTime() - inv!.createdAt.getTime()) / 86_400_000
    expect(days).toBeGreaterThan(6.99)
    expect(days).toBeLessThanOrEqual(7.001)

    const offer = await new Client().get(`/api/invitations/${token}`)
    expect(offer.status).toBe(200)
    expect(offer.body).toMatchObject({ firmName: 'Larchmere Survey Co.', email, role: 'field_crew', existingUser: false })
    expect(JSON.stringify(offer.body)).not.toContain(inv!.tokenHash)

    const noName = await new Client().post(`/api/invitations/${token}/accept`, { password: 'invitee password 1' })
    expect(noName.status).toBe(422)
    expect(noName.body.errors[0].field).toBe('name')

    const ok = await new Client().post(`/api/invitations/${token}/accept`, { name: 'New Invitee', password: 'invitee password 1' })
    expect(ok.status).toBe(200)
    expect(ok.body).toMatchObject({ firmSlug: DEMO.firm })
    const again = await new Client().post(`/api/invitations/${token}/accept`, { name: 'Someone Else', password: 'other password 1' })
    expect(again.status).toBe(404)
    expect((await new Client().get(`/api/invitations/${token}`)).status).toBe(404)

    const c = await as(email, 'invitee password 1')
    const me = await c.get('/api/me')
    expect(me.body.user.name).toBe('New Invitee')
    expect(me.body.firms).toEqual([expect.objectContaining({ slug: DEMO.firm, role: 'field_crew' })])
    expect((await lastAudit('invitation.accept'))?.after).toMatchObject({ email, role: 'field_crew' })
  })

  it('a person with an account joins after confirming their own password', async () => {
    const db = useDb()
    const email = `existing-${stamp()}@tiepoint.test`
    const [u] = await db.insert(users).values({ email, name: 'Existing Person', passwordHash: await hashPassword('existing password') }).returning()
    const [kestrel] = await db.select().from(firms).where(eq(firms.slug, DEMO.otherFirm))
    await db.insert(memberships).values({ firmId: kestrel!.id, userId: u!.id, role: 'party_chief' })

    const token = await invite(email, 'client')
    expect((await new Client().get(`/api/invitations/${token}`)).body.existingUser).toBe(true)
    const wrong = await new Client().post(`/api/invitations/${token}/accept`, { password: 'not the password' })
    expect(wrong.status).toBe(422)
    expect(wrong.body.errors[0].field).toBe('password')
    const ok = await new Client().post(`/api/invitations/${token}/accept`, { password: 'existing password' })
    expect(ok.status).toBe(200)
    const me = await (await as(email, 'existing password')).get('/api/me')
    expect(me.body.firms.map((f: { slug: string; role: string }) => `${f.slug}:${f.role}`).sort())
      .toEqual([`${DEMO.otherFirm}:party_chief`, `${DEMO.firm}:client`].sort())
    expect(me.body.user.name).toBe('Existing Person')
  })

  it('refuses to invite someone who is already a member (409) and lists, withdraws open invitations', async () => {
    const dup = await owner.post(`/api/firms/${DEMO.firm}/invitations`, { email: DEMO.crew, role: 'client' })
    expect(dup.status).toBe(409)
    expect(dup.body.errors[0].field).toBe('email')

    const email = `withdrawn-${stamp()}@tiepoint.test`
    const token = await invite(email, 'party_chief')
    const open = await owner.get(`/api/firms/${DEMO.firm}/invitations`)
    const mine = open.body.find((i: { email: string }) => i.email === email)
    expect(mine).toMatchObject({ role: 'party_chief', expired: false })
    expect((await owner.delete(`/api/firms/${DEMO.firm}/invitations/${mine.id}`)).status).toBe(204)
    expect((await new Client().get(`/api/invitations/${token}`)).status).toBe(404)
    expect((await lastAudit('invitation.revoke'))?.entityId).toBe(String(mine.id))
  })

  it('a new invitation to the same address replaces the old link', async () => {
    const email = `twice-${stamp()}@tiepoint.test`
    const first = await invite(email, 'field_crew')
    await new Promise((r) => setTimeout(r, 50))
    const r = await owner.post(`/api/firms/${DEMO.firm}/invitations`, { email, role: 'party_chief' })
    expect(r.status).toBe(201)
    expect((await new Client().get(`/api/invitations/${first}`)).status).toBe(404)
  })
})

describe('changing and removing members', () => {
  it('an owner changes a role and removes a member; both are audited', async () => {
    const email = `member-${stamp()}@tiepoint.test`
    const token = await invite(email, 'field_crew')
    await new Client().post(`/api/invitations/${token}/accept`, { name: 'Short Stay', password: 'short stay password' })
    const member = (await owner.get(`/api/firms/${DEMO.firm}/members`)).body.find((m: { email: string }) => m.email === email)
    expect(member).toMatchObject({ role: 'field_crew', active: true })

    const changed = await owner.patch(`/api/firms/${DEMO.firm}/members/${member.id}`, { role: 'party_chief' })
    expect(changed.status).toBe(200)
    expect(changed.body.role).toBe('party_chief')
    const person = await as(email, 'short stay password')
    expect((await person.get('/api/me')).body.firms[0].role).toBe('party_chief')
    const roleAudit = await lastAudit('member.role')
    expect(roleAudit).toMatchObject({ entityId: String(member.id), before: { role: 'field_crew' }, after: { role: 'party_chief' } })
    expect(roleAudit!.beforeHash).toMatch(/^[0-9a-f]{64}$/)

    expect((await owner.delete(`/api/firms/${DEMO.firm}/members/${member.id}`)).status).toBe(204)
    expect((await person.get('/api/me')).body.firms).toEqual([])
    expect((await person.get(`/api/firms/${DEMO.firm}/projects`)).status).toBe(404)
    expect((await lastAudit('member.remove'))).toMatchObject({ entityId: String(member.id), before: { email } })
  })

  it('the last owner can be neither demoted nor removed', async () => {
    const me = (await owner.get(`/api/firms/${DEMO.firm}/members`)).body.find((m: { email: string }) => m.email === DEMO.owner)
    const demote = await owner.patch(`/api/firms/${DEMO.firm}/members/${me.id}`, { role: 'party_chief' })
    expect(demote.status).toBe(409)
    expect(demote.body.message).toMatch(/owner/)
    expect((await owner.delete(`/api/firms/${DEMO.firm}/members/${me.id}`)).status).toBe(409)
    const [row] = await useDb().select().from(memberships).where(eq(memberships.id, me.id))
    expect(row!.role).toBe('owner')
  })

  it('with a second owner, the first may step down', async () => {
    const email = `owner2-${stamp()}@tiepoint.test`
    const token = await invite(email, 'owner')
    await new Client().post(`/api/invitations/${token}/accept`, { name: 'Second Owner', password: 'second owner password' })
    const second = await as(email, 'second owner password')
    const members = (await second.get(`/api/firms/${DEMO.firm}/members`)).body as { id: number; email: string }[]
    const secondRow = members.find((m) => m.email === email)!
    // The second owner demotes themself (allowed: another owner remains), then cannot act as owner.
    expect((await second.patch(`/api/firms/${DEMO.firm}/members/${secondRow.id}`, { role: 'licensed_surveyor' })).status).toBe(200)
    expect((await second.get(`/api/firms/${DEMO.firm}/invitations`)).status).toBe(403)
    expect((await owner.delete(`/api/firms/${DEMO.firm}/members/${secondRow.id}`)).status).toBe(204)
  })
})

describe('development mailbox', () => {
  it('shows the invitee the invitation sent to them, and neither the inviting owner nor another firm', async () => {
    const email = `mailbox-${stamp()}@tiepoint.test`
    await invite(email, 'client')
    // the owner's own mailbox holds no mail addressed to someone else
    const box = await owner.get('/api/me/mailbox')
    expect(box.status).toBe(200)
    expect(box.body.some((m: { to: string }) => m.to.includes(email))).toBe(false)
    const other = await (await as(DEMO.other)).get('/api/me/mailbox')
    expect(other.status).toBe(200)
    expect(other.body.some((m: { to: string }) => m.to.includes(email))).toBe(false)
  })
  it('the old firm-wide mailbox route is gone', async () => {
    expect((await owner.get(`/api/firms/${DEMO.firm}/mailbox`)).status).toBe(404)
  })
})
