import { problemFields } from './problemFields'

/** The signed-in user's own password change. */
export function usePasswordChange() {
  const busy = ref(false)
  const done = ref(false)
  const error = ref<string | null>(null)
  const fields = ref<Record<string, string>>({})

  async function change(currentPassword: string, newPassword: string): Promise<boolean> {
    busy.value = true
    done.value = false
    error.value = null
    fields.value = {}
    try {
      await $fetch('/api/me/password', { method: 'POST', body: { currentPassword, newPassword } })
      done.value = true
      return true
    } catch (e) {
      const p = problemFields(e, 'The password could not be changed.')
      error.value = p.detail
      fields.value = p.fields
      return false
    } finally {
      busy.value = false
    }
  }
  return { busy, done, error, fields, change }
}
