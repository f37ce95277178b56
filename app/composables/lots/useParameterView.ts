import type { ParameterView, Population } from '#shared/types/capability'

export type ParameterChoice = { step: string; name: string; qualifier: number; revision: number | null }

/**
 * Charts of one parameter of a lot under one revision. They render in the browser only, so the data is fetched
 * there, and a late answer never overwrites a newer one. The first request leaves while the page hydrates; its answer
 * is taken in after mount, so the hydrated page matches the server's.
 */
export function useParameterView(code: Ref<string>, choice: Ref<ParameterChoice | null>, attempts: Ref<Population>) {
  // shallow: the view is replaced whole, and thousands of chart points need no deep reactive proxies
  const view = shallowRef<ParameterView | null>(null)
  const status = ref<'idle' | 'pending' | 'success' | 'error'>('idle')
  const error = ref<unknown>(null)
  const key = computed(() => (choice.value ? `${code.value}|${choice.value.step}|${choice.value.name}|${choice.value.qualifier}|${choice.value.revision}|${attempts.value}` : null))

  function request(c: ParameterChoice): Promise<ParameterView> {
    const query = { step: c.step, qualifier: c.qualifier, attempts: attempts.value, ...(c.revision !== null ? { revision: c.revision } : {}) }
    return $fetch<ParameterView>(`/api/lots/${encodeURIComponent(code.value)}/parameters/${encodeURIComponent(c.name)}`, { query })
  }
  let early = import.meta.client && choice.value ? { key: key.value, answer: request(choice.value) } : null
  early?.answer.catch(() => { /* taken in by load() */ })

  let latest = 0
  async function load() {
    const c = choice.value
    const ticket = ++latest
    if (!c) { view.value = null; status.value = 'success'; return }
    status.value = 'pending'
    try {
      const answer = early?.key === key.value ? early.answer : request(c)
      early = null
      const r = await answer
      if (ticket === latest) { view.value = r; status.value = 'success' }
    } catch (e) {
      if (ticket === latest) { error.value = e; status.value = 'error' }
    }
  }
  onMounted(() => watch(key, load, { immediate: true }))
  return { view, status, error }
}
