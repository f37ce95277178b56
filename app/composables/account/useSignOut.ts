/**
 * Signs this browser out through the server's own route, which clears the session cookie with the flags it was set
 * with (a Secure-flagged clearing would be ignored over plain HTTP), then forgets the session in the app.
 */
export function useSignOut() {
  const { session } = useUserSession()
  return async function signOut(): Promise<void> {
    await $fetch('/api/auth/sign-out', { method: 'POST' })
    session.value = null
  }
}
