import type { Knex } from 'knex'
import { findUserById, findUserForSignIn, type UserRecord } from '../../database/repositories/users'
import { closeOpenResets, findReset, insertReset } from '../../database/repositories/password-resets'
import { checkNewPassword, writePassword, type Hasher } from './set-password'
import { hashResetToken, newResetToken, resetLink, RESET_LIFETIME_MS } from './reset-token'
import { RuleError } from '../rule-error'
import { writeTransaction } from '../../database/write-retries'

/** Sends the link inside the transaction that stores its token (the mail outbox). */
export type LinkSender = (trx: Knex, user: UserRecord, link: string, expiresInMinutes: number) => Promise<void>

/** An unknown, used or expired link: the same 410 whichever it is, so a link's state is not told. */
function linkNotValid(): RuleError {
  return new RuleError(410, 'This link to set a password is not valid: it may have been used already or have expired. Ask for a new one.', [{ pointer: '/token', message: 'not valid' }])
}

/**
 * A request for a link. The caller answers the same whatever happens here; a token is drawn and hashed for every
 * request, so a known and an unknown address cost about the same work before the one write.
 */
export async function requestPasswordReset(db: Knex, o: { email: string; address: string; siteUrl: string; now?: Date }, send: LinkSender): Promise<void> {
  const now = o.now ?? new Date()
  const token = newResetToken()
  const tokenHash = hashResetToken(token)
  const user = await findUserForSignIn(db, o.email.trim().toLowerCase())
  if (!user || user.disabled) return
  await writeTransaction(db, async (trx) => {
    await insertReset(trx, { tokenHash, userId: user.id, createdAt: now, expiresAt: new Date(now.getTime() + RESET_LIFETIME_MS), requestedFrom: o.address })
    await send(trx, user, resetLink(o.siteUrl, token), RESET_LIFETIME_MS / 60_000)
  })
}

function usable(row: { usedAt: Date | null; expiresAt: Date } | undefined, now: Date): boolean {
  return !!row && !row.usedAt && row.expiresAt.getTime() > now.getTime()
}

/**
 * Sets the password a link was sent for: once, within its lifetime, by the one rule. Using it closes every other
 * open link of the user. Unknown, used and expired links are refused alike.
 */
export async function confirmPasswordReset(db: Knex, o: { token: string; newPassword: string; address: string; now?: Date }, hash: Hasher): Promise<{ userId: number }> {
  const now = o.now ?? new Date()
  const tokenHash = hashResetToken(o.token)
  const first = await findReset(db, tokenHash)
  if (!usable(first, now)) throw linkNotValid()
  const user = await findUserById(db, first!.userId)
  if (!user || user.disabled) throw linkNotValid()
  checkNewPassword(o.newPassword, user, '/newPassword')
  const passwordHash = await hash(o.newPassword)
  await writeTransaction(db, async (trx) => {
    const row = await findReset(trx, tokenHash, true)
    if (!usable(row, now)) throw linkNotValid()
    const closed = await closeOpenResets(trx, user.id, now)
    await writePassword(trx, user.id, passwordHash, { actorId: user.id, action: 'password_reset', after: { passwordChanged: true, by: 'e-mailed link', from: o.address, linksClosed: closed } })
  })
  return { userId: user.id }
}
