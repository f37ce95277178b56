import type { H3Event } from 'h3'
import { findUserForSignIn, type UserRecord } from '../database/repositories/users'
import { formatWait } from '../../shared/utils/value-format'
import { problem } from './problem'
import { clientAddress } from './client-address'
import { clearAccountFailures, notePasswordFailure, passwordAttemptWait } from './sign-in-limit'

function tooMany(wait: number, what: string) {
  return problem(429, `Too many ${what}; try again in ${formatWait(wait)}.`, { headers: { 'Retry-After': String(wait) } })
}

/**
 * Checks an e-mail address and password for signing in. A wrong one counts toward the failure limits of the account
 * and the client address (kept in the database, shared by every instance); once either is reached every attempt
 * answers 429 with Retry-After, even the right password, until the window passes. Unknown, disabled and wrong all
 * get the same 401.
 */
export async function verifySignIn(event: H3Event, email: string, password: string): Promise<UserRecord> {
  const address = clientAddress(event)
  const wait = await passwordAttemptWait(email, address)
  if (wait > 0) throw tooMany(wait, 'failed sign-in attempts')
  const user = await findUserForSignIn(useDb(), email)
  const ok = user && !user.disabled && await verifyPassword(user.passwordHash, password)
  if (!ok || !user) {
    await notePasswordFailure(email, address)
    throw problem(401, 'The e-mail address or password is not correct, or the account is disabled.')
  }
  await clearAccountFailures(email)
  return user
}

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
  const wait = await passwordAttemptWait(key, address)
  if (wait > 0) throw tooMany(wait, 'wrong passwords')
  const account = await findUserForSignIn(useDb(), key)
  const ok = !!account && account.id === user.id && await verifyPassword(account.passwordHash, password)
  if (!ok) {
    await notePasswordFailure(key, address)
    throw problem(422, refusal.detail, { errors: [{ pointer, message: 'not correct' }], ...refusal.extra })
  }
  await clearAccountFailures(key)
}
