import nodemailer from 'nodemailer'
import type { Deliver } from './sender'
import type { SmtpSettings } from './settings'

/** Delivers over SMTP with nodemailer; the Message-ID fixed at enqueue travels with every try. */
export function smtpDeliver(s: SmtpSettings): Deliver {
  const transport = nodemailer.createTransport({
    host: s.host, port: s.port, secure: s.secure,
    // a loopback catcher speaks plain SMTP; a real relay is offered STARTTLS when it announces it
    ignoreTLS: !s.secure && (s.host === '127.0.0.1' || s.host === 'localhost'),
    auth: s.user ? { user: s.user, pass: s.password ?? '' } : undefined,
    connectionTimeout: 15_000, greetingTimeout: 15_000, socketTimeout: 60_000,
  })
  return async (m) => {
    await transport.sendMail({ from: s.from, to: m.to, subject: m.subject, text: m.text, html: m.html, messageId: m.messageId })
  }
}
