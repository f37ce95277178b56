// A signed-in reader is not sent to the sign-in page because the server could not check the session while the
// database was away: a request that carries a session cookie but came back signed out asks the health check, and
// if the database is unavailable the answer is the 503 error page with Retry-After ("try again in a few seconds").
export default defineNuxtRouteMiddleware(async () => {
  if (import.meta.client) return
  const { loggedIn } = useUserSession()
  if (loggedIn.value || !useRequestHeaders(['cookie']).cookie?.includes('nuxt-session=')) return
  const status = await useRequestFetch()('/api/health', { retry: false }).then(() => 200, (e: any) => Number(e?.statusCode ?? e?.response?.status ?? 500))
  if (status !== 503) return
  useRequestEvent()?.node.res.setHeader('Retry-After', '5')
  return createError({ statusCode: 503, statusMessage: 'Service Unavailable' })
})
