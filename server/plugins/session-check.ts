import { checkSession, endSession } from '../utils/session'

/**
 * The app learns who is signed in from GET /api/_auth/session (nuxt-auth-utils' route). A session that has ended
 * (disabled user, raised session version) is answered empty there too, and its cookie cleared.
 */
export default defineNitroPlugin(() => {
  sessionHooks.hook('fetch', async (session, event) => {
    if ((await checkSession(event)).user) return
    await endSession(event)
    for (const key of Object.keys(session)) if (key !== 'id') delete (session as Record<string, unknown>)[key]
  })
})
