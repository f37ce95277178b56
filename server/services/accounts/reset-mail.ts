import type { LinkSender } from './password-reset'
import { enqueueMail } from '../mail/outbox'
import { passwordReset } from '../mail/templates'

/** Queues the link in the outbox, in the transaction that stores its token. */
export const sendResetLink: LinkSender = async (trx, user, link, expiresInMinutes) => {
  const m = passwordReset({ name: user.name, link, expiresInMinutes })
  await enqueueMail(trx, { to: [user.email], template: 'passwordReset', subject: m.subject, text: m.text, html: m.html })
}
