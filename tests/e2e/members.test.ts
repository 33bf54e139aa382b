// Browser: the owner invites a party chief from the Members page and sees the
// invitation link once, the invitation e-mail arrives in the invitee's own
// development mailbox (not the owner's), the invitee opens the
// link, chooses a name and password and lands signed in on the firm's home;
// the owner then changes the new member's role. Screenshots go to tests/screenshots/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import type { Browser, Page } from 'playwright-core'
import { closeDb, useDb } from '../../server/db/client'
import { firms, memberships, users } from '../../server/db/schema'
import { baseUrl } from '../support/env'
import { launch, newPage, shot, signIn } from '../support/browser'
import { DEMO } from '../support/http'
import { mailTo } from '../support/mail'

let browser: Browser
let owner: Page
const invitee = `new-chief-${Date.now()}@tiepoint.test`
const inviteeName = 'Wren Achterberg'
const inviteePassword = 'harrow-creek-chief-1'
let link = ''

beforeAll(async () => {
  browser = await launch()
  owner = await newPage(browser)
  await signIn(owner, DEMO.owner)
})
afterAll(async () => { await browser?.close(); await closeDb() })


async function roleOf(email: string) {
  const [row] = await useDb().select({ role: memberships.role }).from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId)).innerJoin(firms, eq(firms.id, memberships.firmId))
    .where(and(eq(users.email, email), eq(firms.slug, DEMO.firm)))
  return row?.role ?? null
}

describe('members and invitations', () => {
  it('the owner invites a party chief from the Members page', async () => {
    await owner.goto(`/f/${DEMO.firm}/members`)
    await owner.getByTestId('members-table').waitFor()
    await owner.locator('#invite-email').fill(invitee)
    await owner.locator('#invite-role').selectOption('party_chief')
    await owner.getByRole('button', { name: 'Send invitation' }).click()
    await expect.poll(() => owner.getByRole('status').innerText().catch(() => '')).toContain(`Invitation sent to ${invitee}`)
    const open = owner.locator('table', { hasText: 'Invited by' }).locator('tr', { hasText: invitee })
    await expect.poll(() => open.count()).toBe(1)
    expect(await open.innerText()).toContain('Party chief')
    // The link is shown this once, to copy.
    const shown = await owner.getByLabel('Invitation link').inputValue()
    expect(shown).toMatch(new RegExp(`^${baseUrl}/invite/[A-Za-z0-9_-]+$`))
    link = shown
    await shot(owner, 'members-invited')
  })

  it('the invitation e-mail arrives with a one-time link to this server', async () => {
    const mail = await mailTo(invitee)
    expect(mail.subject).toMatch(/invit/i)
    const m = mail.text.match(/https?:\/\/\S+\/invite\/[A-Za-z0-9_-]+/)
    expect(m, mail.text).not.toBeNull()
    // the e-mail carries the same link the owner was shown
    expect(m![0]).toBe(link)
    // The owner's own mailbox does not show mail addressed to someone else.
    await owner.goto(`/f/${DEMO.firm}/mailbox`)
    await owner.getByTestId('dev-mailbox-label').waitFor()
    expect(await owner.getByText(invitee).count()).toBe(0)
    await shot(owner, 'members-mailbox')
  })

  it('the invitee sets a name and password and lands signed in on the firm', async () => {
    const p = await newPage(browser)
    await p.goto(link.replace(baseUrl, ''))
    await p.getByTestId('invite-form').waitFor()
    expect(await p.getByTestId('invite-form').innerText()).toContain('party chief')
    await p.getByLabel('Your name').fill(inviteeName)
    await p.getByLabel('Choose a password').fill(inviteePassword)
    await p.getByLabel('Password again').fill(inviteePassword)
    await shot(p, 'members-accept-form')
    await p.getByRole('button', { name: 'Accept and sign in' }).click()
    await p.waitForURL((u) => u.pathname.startsWith(`/f/${DEMO.firm}`), { timeout: 20_000 })
    await expect.poll(() => p.getByText(inviteeName).count(), { timeout: 15_000 }).toBeGreaterThan(0)
    const me = await p.request.get('/api/me')
    expect(me.status()).toBe(200)
    const body = await me.json()
    expect(body.user.email).toBe(invitee)
    expect(body.firms.map((f: { slug: string }) => f.slug)).toContain(DEMO.firm)
    expect(await roleOf(invitee)).toBe('party_chief')
    await shot(p, 'members-invitee-home')
    // The link is one-time: opening it again says so.
    const again = await newPage(browser)
    await again.goto(link.replace(baseUrl, ''))
    await expect.poll(() => again.getByRole('alert').innerText().catch(() => '')).toContain('not valid')
    await p.context().close()
    await again.context().close()
  })

  it('the owner changes the new member to licensed surveyor', async () => {
    await owner.goto(`/f/${DEMO.firm}/members`)
    const row = owner.locator(`tr[data-email="${invitee}"]`)
    await row.waitFor()
    await row.getByLabel(`Role of ${inviteeName}`).selectOption('licensed_surveyor')
    await expect.poll(() => owner.getByRole('status').innerText().catch(() => '')).toContain(`${inviteeName} is now licensed surveyor`)
    expect(await roleOf(invitee)).toBe('licensed_surveyor')
    await shot(owner, 'members-role-changed')
  })

  it('the Members page reads at phone width', async () => {
    const p = await newPage(browser, 390, 844)
    await signIn(p, DEMO.owner)
    await p.goto(`/f/${DEMO.firm}/members`)
    await p.getByTestId('members-table').waitFor()
    expect(await p.locator(`tr[data-email="${invitee}"]`).count()).toBe(1)
    await shot(p, 'members-phone')
    await p.context().close()
  })
})
