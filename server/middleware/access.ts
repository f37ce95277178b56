import { findRule } from '../utils/access-policy'
import { authenticateStation, loadSessionUser } from '../utils/auth'
import { problem } from '../utils/problem'

/** Deny by default: every /api request must match a rule in API_POLICY and satisfy it. */
export default defineEventHandler(async (event) => {
  const path = event.path.split('?')[0]!
  if (!path.startsWith('/api/') && path !== '/api') return
  const rule = findRule(event.method, path)
  if (!rule) throw problem(404, `No API route ${event.method} ${path}.`)
  if (rule.allow === 'public') return

  if (rule.allow.includes('station')) {
    const station = await authenticateStation(event)
    if (station) { event.context.station = station; return }
  }
  const session = await getUserSession(event)
  if (!session.user) {
    throw problem(401, rule.allow.includes('station') ? 'A station token or a signed-in user is required.' : 'Sign in to use this resource.')
  }
  const user = await loadSessionUser(session.user.id)
  if (!user || user.disabled) {
    await clearUserSession(event)
    throw problem(401, 'This account is disabled or no longer exists.')
  }
  if (!(rule.allow as string[]).includes(user.role)) throw problem(403, 'Your role does not allow this request.')
  event.context.user = user
})
