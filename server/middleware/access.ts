import { findRule } from '../utils/access-policy'
import { authenticateStation } from '../utils/auth'
import { problem } from '../utils/problem'
import { checkSession, endSession } from '../utils/session'

/** Deny by default: every /api request must match a rule in API_POLICY and satisfy it. */
export default defineEventHandler(async (event) => {
  const path = event.path.split('?')[0]!
  if (!path.startsWith('/api/') && path !== '/api') return
  // the router knows only a route's GET handler; a HEAD request runs it and Node sends the headers without the body
  if (event.method === 'HEAD') (event as unknown as { _method: string })._method = 'GET'
  const rule = findRule(event.method, path)
  if (!rule) throw problem(404, `No API route ${event.method} ${path}.`)
  if (rule.allow === 'public') return

  if (rule.allow.includes('station')) {
    const station = await authenticateStation(event)
    if (station) { event.context.station = station; return }
  }
  const check = await checkSession(event)
  if (!check.user) {
    if (check.reason === 'ended') {
      await endSession(event)
      throw problem(401, 'This session has ended (signed out elsewhere, password changed or account disabled); sign in again.')
    }
    throw problem(401, rule.allow.includes('station') ? 'A station token or a signed-in user is required.' : 'Sign in to use this resource.')
  }
  const user = check.user
  if (!(rule.allow as string[]).includes(user.role)) throw problem(403, 'Your role does not allow this request.')
  event.context.user = user
})
