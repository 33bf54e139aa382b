// In development and tests (no SMTP_URL, listening on loopback) an SMTP server
// runs inside the app and keeps every message in the mailbox_messages table,
// with the envelope's recipients, so each person reads only their own mail at
// /mailbox. A non-loopback HOST without SMTP_URL stops the app at start: mail
// would otherwise be readable by nobody, or by the wrong people.
import { SMTPServer } from 'smtp-server'
import { simpleParser } from 'mailparser'
import { mailboxMessages } from '../db/schema'
import { devMailboxEnabled, devSmtpPort, mailConfigProblem } from '../services/mail'

/** Our own mails are a few KB; anything larger is refused by the SMTP server itself. */
export const DEV_SMTP_MAX_BYTES = 1024 * 1024

export default defineNitroPlugin((nitro) => {
  if (import.meta.prerender) return
  const problem = mailConfigProblem()
  if (problem) {
    console.error(`[tiepoint] refusing to start: ${problem}`)
    process.exit(78) // EX_CONFIG
  }
  if (!devMailboxEnabled()) return
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    banner: 'Tiepoint development mailbox',
    size: DEV_SMTP_MAX_BYTES,
    onData(stream, session, callback) {
      const recipients = [...new Set(session.envelope.rcptTo.map((r) => r.address.trim().toLowerCase()))]
      simpleParser(stream)
        .then(async (mail) => {
          if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
            return callback(Object.assign(new Error('Message is larger than the development mailbox accepts'), { responseCode: 552 }))
          }
          const to = [mail.to].flat().filter(Boolean).map((a) => (a as { text: string }).text).join(', ')
          await useDb().insert(mailboxMessages).values({
            to,
            recipients,
            from: mail.from?.text ?? '',
            subject: mail.subject ?? '',
            text: mail.text ?? '',
            html: typeof mail.html === 'string' ? mail.html : null,
          })
          callback()
        })
        .catch((error: Error) => callback(error))
    },
  })
  server.on('error', (error) => console.error('[tiepoint] development SMTP server:', error.message))
  server.listen(devSmtpPort(), '127.0.0.1')
  nitro.hooks.hook('close', () => new Promise<void>((resolve) => server.close(() => resolve())))
})
