import type { H3Event } from 'h3'
import { findUserForSignIn, type UserRecord } from '../database/repositories/users'
import { problem } from './problem'
import { signInFailuresByAccount, signInFailuresByAddress } from './rate-limit'
import { clientAddress } from './client-address'

/**
 * Checks the signed-in user's current password. A wrong one counts toward the sign-in failure limits like a failed
 * sign-in (429 with Retry-After once they are reached), so a stolen session cannot guess the password here.
 */
export async function requireCurrentPassword(
  event: H3Event, user: UserRecord, password: string, pointer: string,
  refusal: { detail: string; extra?: Record<string, unknown> } = { detail: 'The current password is not correct.' },
): Promise<void> {
  const address = clientAddress(event)
  const key = user.email.toLowerCase()
  const wait = Math.max(signInFailuresByAccount.retryAfter(key), signInFailuresByAddress.retryAfter(address))
  if (wait > 0) throw problem(429, `Too many wrong passwords; try again in ${wait} s.`, { headers: { 'Retry-After': String(wait) } })
  const account = await findUserForSignIn(useDb(), key)
  const ok = !!account && account.id === user.id && await verifyPassword(account.passwordHash, password)
  if (!ok) {
    signInFailuresByAccount.fail(key)
    signInFailuresByAddress.fail(address)
    throw problem(422, refusal.detail, { errors: [{ pointer, message: 'not correct' }], ...refusal.extra })
  }
  signInFailuresByAccount.clear(key)
}
