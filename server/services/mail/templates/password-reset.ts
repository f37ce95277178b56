import { htmlMail, type RenderedMail } from './layout'

export type PasswordResetInput = { name: string; link: string; expiresInMinutes?: number }

/** The link that lets a user choose a new password; it lapses after 30 minutes unless told otherwise. */
export function passwordReset(i: PasswordResetInput): RenderedMail {
  const minutes = i.expiresInMinutes ?? 30
  const subject = 'Choose a new Tercet password'
  const text = [
    `Hello ${i.name},`,
    '',
    'someone — most likely you — asked to choose a new password for your Tercet account.',
    `Follow this link within ${minutes} minutes to set it:`,
    '',
    i.link,
    '',
    'If you did not ask for this, ignore this message: your password stays as it is and the link lapses on its own.',
  ].join('\n')
  const html = htmlMail('Choose a new password', [
    { kind: 'p', text: `Hello ${i.name}, someone — most likely you — asked to choose a new password for your Tercet account.` },
    { kind: 'p', text: `The link below works for ${minutes} minutes.` },
    { kind: 'button', label: 'Set a new password', href: i.link },
    { kind: 'note', text: 'If you did not ask for this, ignore this message: your password stays as it is and the link lapses on its own.' },
  ])
  return { subject, text, html }
}
