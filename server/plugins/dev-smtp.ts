// In development and tests (no SMTP_URL) an SMTP server runs inside the app
// and keeps every message in the mailbox_messages table, where the owner's
// development mailbox page and the tests read them.
import { SMTPServer } from 'smtp-server'
import { simpleParser } from 'mailparser'
import { mailboxMessages } from '../db/schema'
import { devMailboxEnabled, devSmtpPort } from '../services/mail'

export default defineNitroPlugin((nitro) => {
  if (!devMailboxEnabled() || import.meta.prerender) return
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    banner: 'Tiepoint development mailbox',
    onData(stream, _session, callback) {
      simpleParser(stream)
        .then(async (mail) => {
          const to = [mail.to].flat().filter(Boolean).map((a) => (a as { text: string }).text).join(', ')
          await useDb().insert(mailboxMessages).values({
            to,
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
