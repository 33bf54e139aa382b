// Reading the development mailbox (what the in-process SMTP server received) in tests.
import { desc, sql } from 'drizzle-orm'
import { useDb } from '../../server/db/client'
import { mailboxMessages } from '../../server/db/schema'

/** Waits for the newest message to an address (an exact envelope recipient) to land in the development mailbox. */
export async function mailTo(email: string, timeoutMs = 15_000) {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    const [m] = await useDb().select().from(mailboxMessages).where(sql`${email.toLowerCase()} = any(${mailboxMessages.recipients})`).orderBy(desc(mailboxMessages.id)).limit(1)
    if (m) return m
    await new Promise((r) => setTimeout(r, 200))
  }
  throw new Error(`no mail to ${email} within ${timeoutMs} ms`)
}
