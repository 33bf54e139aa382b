// Outgoing e-mail over SMTP (nodemailer). SMTP_URL points at a real server in
// production; without it, mail goes to the local in-process SMTP server
// (server/plugins/dev-smtp.ts) and lands in the development mailbox.
import nodemailer from 'nodemailer'
import type { Transporter } from 'nodemailer'

let transport: Transporter | undefined

export const devMailboxEnabled = () => !process.env.SMTP_URL
export const devSmtpPort = () => Number(process.env.TIEPOINT_SMTP_PORT ?? 2525)

function useTransport(): Transporter {
  transport ??= process.env.SMTP_URL
    ? nodemailer.createTransport(process.env.SMTP_URL)
    : nodemailer.createTransport({ host: '127.0.0.1', port: devSmtpPort(), secure: false, ignoreTLS: true })
  return transport
}

export interface Mail {
  to: string | string[]
  subject: string
  /** paragraphs of plain text; the HTML part is made from them */
  paragraphs: string[]
  link?: { url: string; label: string }
  firmName: string
}

export function publicUrl(path = ''): string {
  const base = process.env.TIEPOINT_PUBLIC_URL || (process.env.AUTH_ORIGIN ?? 'http://127.0.0.1:3000/api/auth').replace(/\/api\/auth\/?$/, '')
  return base.replace(/\/$/, '') + path
}

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

export function renderMail(m: Mail): { text: string; html: string } {
  const footer = `Sent by Tiepoint on behalf of ${m.firmName}. This is a transactional message about your work with the firm.`
  const text = [...m.paragraphs, ...(m.link ? [`${m.link.label}: ${m.link.url}`] : []), '--', footer].join('\n\n')
  const html = `<div style="font-family:'IBM Plex Sans',Arial,sans-serif;color:#0f172a;max-width:560px">
${m.paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`).join('\n')}
${m.link ? `<p><a href="${escapeHtml(m.link.url)}" style="background:#1f5d5d;color:#fff;padding:8px 14px;border-radius:6px;text-decoration:none">${escapeHtml(m.link.label)}</a></p>` : ''}
<hr style="border:none;border-top:1px solid #e2e8f0"><p style="color:#64748b;font-size:12px">${escapeHtml(footer)}</p></div>`
  return { text, html }
}

export async function sendMail(m: Mail): Promise<void> {
  const { text, html } = renderMail(m)
  await useTransport().sendMail({
    from: process.env.MAIL_FROM ?? `"Tiepoint" <no-reply@tiepoint.test>`,
    to: m.to,
    subject: m.subject,
    text,
    html,
  })
}
