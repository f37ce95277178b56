import type { H3Event } from 'h3'
import type { TLSSocket } from 'node:tls'
import { findSessionUser, readSessionVersion, type UserRecord } from '../database/repositories/users'

/** The session cookie's name (nuxt-auth-utils' default, kept so the module's own readers find it). */
export const SESSION_COOKIE = 'nuxt-session'

/**
 * Whether the browser reached us over HTTPS: a TLS socket, or behind a declared reverse proxy
 * (TERCET_TRUST_PROXY=1, as for client addresses) an X-Forwarded-Proto of https.
 */
export function servedOverHttps(event: H3Event): boolean {
  if ((event.node.req.socket as Partial<TLSSocket>).encrypted) return true
  if (process.env.TERCET_TRUST_PROXY !== '1') return false
  const proto = getHeader(event, 'x-forwarded-proto')
  return proto?.split(',')[0]!.trim().toLowerCase() === 'https'
}

/**
 * The cookie of every session write: never readable by scripts, not sent on cross-site sub-requests, and Secure
 * when served over HTTPS. (Over plain HTTP a Secure cookie would be dropped by the browser, and a sign-out could
 * not overwrite the cookie, so the flag follows the scheme the request came in on.)
 */
export function sessionCookieConfig(event: H3Event) {
  return { cookie: { path: '/', httpOnly: true, sameSite: 'lax' as const, secure: servedOverHttps(event) } }
}

/** Seals a new session for the user with the user's current session version; answers the user as the session holds it. */
export async function startSession(event: H3Event, user: UserRecord, loggedInAt = Date.now()) {
  const sessionUser = { id: user.id, email: user.email, name: user.name, role: user.role, customerId: user.customerId }
  await replaceUserSession(event, { user: sessionUser, loggedInAt, version: user.sessionVersion }, sessionCookieConfig(event))
  return sessionUser
}

/** Gives the current session a cookie carrying the user's new session version (after it ended the others). */
export async function keepSession(event: H3Event, sessionVersion: number): Promise<void> {
  await setUserSession(event, { version: sessionVersion }, sessionCookieConfig(event))
}

/** Ends the current session: the cookie is overwritten empty, with the same flags it was set with. */
export async function endSession(event: H3Event): Promise<void> {
  await clearUserSession(event, sessionCookieConfig(event))
}

function hasSessionCookie(event: H3Event): boolean {
  return (getHeader(event, 'cookie') ?? '').includes(`${SESSION_COOKIE}=`)
}

export type SessionCheck = { user: UserRecord } | { user: undefined; reason: 'none' | 'ended' }

/**
 * The user of the request's session, read from the database on every request (one primary-key read, no
 * in-process cache) so that a disabled account or a raised session version ends the session at once on every
 * app instance. A session sealed with another version than the user's current one has ended.
 */
export async function checkSession(event: H3Event): Promise<SessionCheck> {
  // without a cookie there is nothing to read (and h3 would answer with a cookie for an empty session)
  if (!hasSessionCookie(event)) return { user: undefined, reason: 'none' }
  const session = await getUserSession(event)
  if (!session.user) return { user: undefined, reason: 'none' }
  const user = await findSessionUser(useDb(), session.user.id)
  return sessionAlive(user, session.version) ? { user } : { user: undefined, reason: 'ended' }
}

/** Whether a session sealed with `version` may act as `user` (as read from the database just now). */
function sessionAlive(user: UserRecord | undefined, version: unknown): user is UserRecord {
  return !!user && !user.disabled && user.sessionVersion === version
}

/** Whether a session checked earlier with this version is still alive (for long-lived answers such as streams). */
export async function sessionStillValid(userId: number, version: number): Promise<boolean> {
  return sessionAlive(await findSessionUser(useDb(), userId), version)
}

export async function currentSessionVersion(userId: number): Promise<number> {
  return readSessionVersion(useDb(), userId)
}
