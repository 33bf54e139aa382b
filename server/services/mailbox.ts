// The development mailbox: what the in-process SMTP server received
// (server/plugins/dev-smtp.ts), only while no real SMTP server is configured.
// Each signed-in person sees only the messages whose envelope recipients
// include their own address, compared whole (no substring or pattern match):
// a message to someone else — an invitation, a reset link — is never shown.
import { desc, sql } from 'drizzle-orm'
import { mailboxMessages } from '../db/schema'
import { useDb } from '../db/client'
import { DomainError } from '../utils/errors'
import type { SessionUser } from '../utils/guard'
import { auditPerson } from './audit'
import { devMailboxEnabled } from './mail'

export interface MailboxMessageDto {
  id: number
  to: string
  from: string
  subject: string
  text: string
  receivedAt: string
}

export async function listMailbox(user: SessionUser, limit = 100): Promise<MailboxMessageDto[]> {
  if (!devMailboxEnabled()) throw new DomainError('unavailable', 'The development mailbox is off: e-mail goes to the configured SMTP server')
  const address = user.email.trim().toLowerCase()
  const rows = await useDb().select().from(mailboxMessages)
    .where(sql`${address} = any(${mailboxMessages.recipients})`)
    .orderBy(desc(mailboxMessages.receivedAt), desc(mailboxMessages.id)).limit(limit)
  await auditPerson(user.id, 'mailbox.read', { count: rows.length, ids: rows.slice(0, 20).map((m) => m.id) })
  return rows.map((m) => ({ id: m.id, to: m.to, from: m.from, subject: m.subject, text: m.text, receivedAt: m.receivedAt.toISOString() }))
}
