// The development mailbox: what the in-process SMTP server received
// (server/plugins/dev-smtp.ts). Only when no real SMTP server is configured.
// Messages carry no firm, so an owner sees only those addressed to people of
// their own firm (members and invited addresses).
import { and, desc, eq, sql } from 'drizzle-orm'
import { invitations, mailboxMessages, memberships, users } from '../db/schema'
import { useDb } from '../db/client'
import type { FirmContext } from '../utils/guard'
import { notFound } from '../utils/errors'
import { devMailboxEnabled } from './mail'

export interface MailboxMessageDto {
  id: number
  to: string
  from: string
  subject: string
  text: string
  receivedAt: string
}

export async function listMailbox(ctx: FirmContext, limit = 100): Promise<MailboxMessageDto[]> {
  if (!devMailboxEnabled()) throw notFound('The development mailbox is off: e-mail goes to the configured SMTP server')
  const db = useDb()
  const memberAddress = db.select({ one: sql`1` }).from(memberships).innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.firmId, ctx.firm.id), sql`position(lower(${users.email}) in lower(${mailboxMessages.to})) > 0`))
  const invitedAddress = db.select({ one: sql`1` }).from(invitations)
    .where(and(eq(invitations.firmId, ctx.firm.id), sql`position(lower(${invitations.email}) in lower(${mailboxMessages.to})) > 0`))
  const rows = await db.select().from(mailboxMessages)
    .where(sql`exists (${memberAddress}) or exists (${invitedAddress})`)
    .orderBy(desc(mailboxMessages.receivedAt), desc(mailboxMessages.id)).limit(limit)
  return rows.map((m) => ({ id: m.id, to: m.to, from: m.from, subject: m.subject, text: m.text, receivedAt: m.receivedAt.toISOString() }))
}
