// Outgoing e-mail over SMTP (nodemailer). SMTP_URL points at a real server in
// production; without it, mail goes to the local in-process SMTP server
// (server/plugins/dev-smtp.ts) and lands in the development mailbox.
import nodemailer from 'nodemailer'
import type { Transporter } from 'nodemailer'

let transport: Transporter | undefined

const LOOPBACK = new Set(['127.0.0.1', '::1', 'localhost', '[::1]'])
/** Where the app listens (as the start script and Nitro read it). */
export const listenHost = () => process.env.NITRO_HOST || process.env.HOST || ''
export const listensOnLoopback = () => LOOPBACK.has(listenHost().toLowerCase()) || /^127\./.test(listenHost())

/**
 * The development mailbox (an in-process SMTP server whose messages each
 * person reads at /mailbox) runs only without SMTP_URL and only when the app
 * listens on loopback, where nobody else can reach it, or when
 * TIEPOINT_DEV_MAILBOX=1 asks for it explicitly (a shared demo).
 */
export const devMailboxEnabled = () =>
  !process.env.SMTP_URL && (listensOnLoopback() || process.env.TIEPOINT_DEV_MAILBOX === '1')

/** Why the app must not start as configured, or null. */
export function mailConfigProblem(): string | null {
  if (process.env.SMTP_URL || listensOnLoopback() || process.env.TIEPOINT_DEV_MAILBOX === '1') return null
  return `Tiepoint listens on ${listenHost() || 'every interface'} but SMTP_URL is not set: invitation and password-reset e-mails `
    + 'would have nowhere to go. Set SMTP_URL to your mail server, listen on 127.0.0.1, or set TIEPOINT_DEV_MAILBOX=1 '
    + 'for a demo where each person reads their own mail in the development mailbox.'
}
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
