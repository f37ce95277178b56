import { problemFields } from './problemFields'

/** Asking for a link to set a forgotten password, and setting it through the link. */
export function usePasswordReset() {
  const busy = ref(false)
  const message = ref<string | null>(null)
  const error = ref<string | null>(null)
  const fields = ref<Record<string, string>>({})
  const linkRefused = ref(false)

  async function run(task: () => Promise<string>): Promise<boolean> {
    busy.value = true
    message.value = null
    error.value = null
    fields.value = {}
    try {
      message.value = await task()
      return true
    } catch (e: any) {
      const p = problemFields(e, 'That did not work; try again.')
      linkRefused.value = e?.statusCode === 410 || e?.status === 410
      error.value = p.detail
      fields.value = p.fields
      return false
    } finally {
      busy.value = false
    }
  }

  const request = (email: string) => run(async () => {
    const r = await $fetch<{ detail: string }>('/api/auth/password-reset', { method: 'POST', body: { email } })
    return r.detail
  })

  const confirm = (token: string, newPassword: string) => run(async () => {
    await $fetch('/api/auth/password-reset/confirm', { method: 'POST', body: { token, newPassword } })
    return 'Your new password is set. Sign in with it.'
  })

  return { busy, message, error, fields, linkRefused, request, confirm }
}
