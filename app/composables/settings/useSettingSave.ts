/**
 * Saving one application setting from a small form: the busy flag, and a "Saved." or refusal message under the form.
 * `refusal` turns the problem the server answered into the words shown (its detail unless told otherwise).
 */
export function useSettingSave<T>(store: (value: T) => Promise<unknown>, saved: () => void, refusal: (e: any) => string | undefined = () => undefined) {
  const message = ref<{ ok: boolean; text: string } | null>(null)
  const saving = ref(false)
  async function save(value: T) {
    saving.value = true
    message.value = null
    try {
      await store(value)
      message.value = { ok: true, text: 'Saved.' }
      saved()
    } catch (e: any) {
      message.value = { ok: false, text: refusal(e) ?? e?.data?.detail ?? 'Not saved.' }
    } finally {
      saving.value = false
    }
  }
  return { message, saving, save }
}
