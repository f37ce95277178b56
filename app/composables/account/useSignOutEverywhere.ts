import { problemFields } from './problemFields'

/**
 * Ends every session of the signed-in user — other browsers, floor displays and this one — after the password
 * confirms it; the app then forgets its own session.
 */
export function useSignOutEverywhere() {
  const busy = ref(false)
  const error = ref<string | null>(null)
  const { session } = useUserSession()

  async function signOutEverywhere(password: string): Promise<boolean> {
    busy.value = true
    error.value = null
    try {
      await $fetch('/api/me/sign-out-everywhere', { method: 'POST', body: { password } })
      session.value = null
      return true
    } catch (e) {
      error.value = problemFields(e, 'Could not sign out everywhere.').detail
      return false
    } finally {
      busy.value = false
    }
  }
  return { busy, error, signOutEverywhere }
}
