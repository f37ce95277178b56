import type { H3Event } from 'h3'
import type { UserRecord } from '../database/repositories/users'
import { requireCurrentPassword } from './current-password'
import { problem } from './problem'

/**
 * Signing an action again: releasing a lot or a shipment, approving a specification revision, revoking or
 * reissuing a certificate, sending calibration impact notices. The user types the password again, or signed in within the last few minutes.
 */
export type Signature = { method: 'password' | 'recent-sign-in'; at: string; signedInAt?: string }

/** How long a sign-in counts as a signature (TERCET_SIGN_WINDOW_S, default five minutes). */
export function signWindowMs(env: NodeJS.ProcessEnv = process.env): number {
  const s = Number(env.TERCET_SIGN_WINDOW_S)
  return Number.isFinite(s) && s >= 0 ? s * 1000 : 5 * 60_000
}

/** The pure rule: a sign-in at `loggedInAt` signs for `windowMs` after it, and never from the future. */
export function signedByRecentSignIn(loggedInAt: number | undefined, now: number, windowMs: number): boolean {
  return typeof loggedInAt === 'number' && Number.isFinite(loggedInAt) && loggedInAt <= now && now - loggedInAt < windowMs
}

export const PASSWORD_NEEDED = 'Enter your password again to sign this action.'

/**
 * Answers how the action is signed, or refuses with 422 and a pointer at /password. A wrong password counts
 * toward the sign-in failure limits like a failed sign-in (429 once they are reached).
 */
export async function requireSignature(event: H3Event, user: UserRecord, password: string | undefined, now = new Date()): Promise<Signature> {
  if (password !== undefined && password !== '') {
    await requireCurrentPassword(event, user, password, '/password', { detail: 'The password is not correct.', extra: { signature: 'required' } })
    return { method: 'password', at: now.toISOString() }
  }
  const session = await getUserSession(event)
  const loggedInAt = (session as { loggedInAt?: number }).loggedInAt
  if (signedByRecentSignIn(loggedInAt, now.getTime(), signWindowMs())) {
    return { method: 'recent-sign-in', at: now.toISOString(), signedInAt: new Date(loggedInAt!).toISOString() }
  }
  throw problem(422, PASSWORD_NEEDED, { errors: [{ pointer: '/password', message: 'your password is needed to sign' }], signature: 'required' })
}
