import type { ParameterView, Population } from '#shared/types/capability'

export type ParameterChoice = { step: string; name: string; qualifier: number; revision: number | null }

/**
 * Charts of one parameter of a lot under one revision. They render in the browser only, so the data is fetched
 * there (after mount), and a late answer never overwrites a newer one.
 */
export function useParameterView(code: Ref<string>, choice: Ref<ParameterChoice | null>, attempts: Ref<Population>) {
  const view = ref<ParameterView | null>(null)
  const status = ref<'idle' | 'pending' | 'success' | 'error'>('idle')
  const error = ref<unknown>(null)
  let latest = 0
  async function load() {
    const c = choice.value
    const ticket = ++latest
    if (!c) { view.value = null; status.value = 'success'; return }
    status.value = 'pending'
    try {
      const query = { step: c.step, qualifier: c.qualifier, attempts: attempts.value, ...(c.revision !== null ? { revision: c.revision } : {}) }
      const r = await $fetch<ParameterView>(`/api/lots/${encodeURIComponent(code.value)}/parameters/${encodeURIComponent(c.name)}`, { query })
      if (ticket === latest) { view.value = r; status.value = 'success' }
    } catch (e) {
      if (ticket === latest) { error.value = e; status.value = 'error' }
    }
  }
  const key = computed(() => (choice.value ? `${choice.value.step}|${choice.value.name}|${choice.value.qualifier}|${choice.value.revision}` : null))
  onMounted(() => watch([key, attempts, code], load, { immediate: true }))
  return { view, status, error }
}
