import type { H3Event } from 'h3'
import type { Role } from '../../shared/utils/roles'
import { findActiveTokensByHint } from '../database/repositories/station-tokens'
import { cacheVersions, VersionedCache } from '../services/cache-versions'
import type { UserRecord } from '../database/repositories/users'
import { hashToken, hashesEqual, tokenHint, tokenLooksValid } from './station-token'
import { problem } from './problem'

/** `seenAt`: when the request was checked (performance.now()); later cache checks of the request may share its counter read. */
export type StationPrincipal = { id: number; name: string; tokenId: number; seenAt?: number }

declare module 'h3' {
  interface H3EventContext {
    user?: UserRecord
    station?: StationPrincipal
  }
}

/** The signed-in user as the access middleware loaded it (fresh from the database, not the cookie). */
export function requireUser(event: H3Event): UserRecord {
  if (!event.context.user) throw problem(401, 'Sign in to use this resource.')
  return event.context.user
}

export function requireStation(event: H3Event): StationPrincipal {
  if (!event.context.station) throw problem(401, 'A valid station token is required.')
  return event.context.station
}

/** Extra role check inside a handler, for actions narrower than the route's own rule. */
export function requireRole(event: H3Event, ...roles: Role[]): UserRecord {
  const user = requireUser(event)
  if (!roles.includes(user.role)) throw problem(403, `This action needs the role ${roles.join(' or ')}.`)
  return user
}

/** A customer user sees only its own customer's data; staff see all. */
export function customerScope(user: UserRecord): number | null {
  return user.role === 'customer' ? user.customerId ?? -1 : null
}

export async function authenticateStation(event: H3Event): Promise<StationPrincipal | undefined> {
  const header = getHeader(event, 'authorization')
  if (!header) return undefined
  const m = header.match(/^Bearer\s+(\S+)$/i)
  if (!m || !tokenLooksValid(m[1]!)) throw problem(401, 'The Authorization header must be "Bearer <station token>".')
  const token = m[1]!
  const hash = hashToken(token)
  const seenAt = performance.now()
  const db = useDb()
  const { tokens } = await cacheVersions(db, seenAt)
  const principal = await tokenCache.get(hash, tokens, async () => {
    const candidates = await findActiveTokensByHint(db, tokenHint(token))
    const hit = candidates.find((c) => hashesEqual(c.tokenHash, hash))
    return hit ? { id: hit.stationId, name: hit.stationName, tokenId: hit.tokenId } : undefined
  })
  if (!principal) throw problem(401, 'The station token is unknown or has been revoked.')
  noteTokenUse(principal.tokenId)
  return { ...principal, seenAt }
}

// Stations post several runs a second: a verified token is trusted until the `tokens` counter moves, which every
// rotation and revocation does in its own transaction, so a revoked token is refused on every instance at its next
// request (services/cache-versions.ts). Unknown tokens are cached too (as undefined), so guessing costs no lookups;
// their number is capped like every such cache.
const tokenCache = new VersionedCache<string, Omit<StationPrincipal, 'seenAt'> | undefined>()

const tokenTouched = new Map<number, number>()
/** last_used_at moves at most once a minute per token, off the request's path. */
function noteTokenUse(tokenId: number): void {
  const now = Date.now()
  if (now - (tokenTouched.get(tokenId) ?? 0) < 60_000) return
  tokenTouched.set(tokenId, now)
  useDb()('station_tokens').where({ id: tokenId }).update({ last_used_at: new Date(now) }).catch(() => tokenTouched.delete(tokenId))
}
