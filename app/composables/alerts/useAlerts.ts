import type { AlertFiringDto, AlertPage, AlertState } from '#shared/types/alert'
import { useAlertCount } from './useAlertCount'

/** The alerts list: state and "concerning me" live in the query string; older pages are appended by keyset. */
export async function useAlerts() {
  const route = useRoute()
  const router = useRouter()
  const state = computed<AlertState>(() => (['open', 'acknowledged', 'all'].includes(String(route.query.state)) ? route.query.state as AlertState : 'open'))
  const mine = computed(() => route.query.mine === '1')
  const query = computed(() => ({ state: state.value, ...(mine.value ? { mine: '1' } : {}), limit: 25 }))
  // composables that need the Nuxt instance come before the first await, which loses it on the server
  const { refresh: refreshCount } = useAlertCount()
  const first = await useFetch<AlertPage>('/api/alerts', { query, default: () => ({ alerts: [], next: null }) })
  const older = ref<AlertFiringDto[]>([])
  const next = ref<string | null>(null)
  watch(first.data, (d) => { older.value = []; next.value = d.next }, { immediate: true })
  const alerts = computed(() => [...first.data.value.alerts, ...older.value])

  async function loadOlder() {
    if (!next.value) return
    const page = await $fetch<AlertPage>('/api/alerts', { query: { ...query.value, cursor: next.value } })
    older.value = [...older.value, ...page.alerts]
    next.value = page.next
  }
  /** Puts the server's copy of one alert in place of the shown one. */
  function replace(a: AlertFiringDto) {
    const swap = (list: AlertFiringDto[]) => list.map((x) => (x.id === a.id ? a : x))
    first.data.value = { ...first.data.value, alerts: swap(first.data.value.alerts) }
    older.value = swap(older.value)
  }
  async function acknowledge(id: number, comment: string) {
    const r = await $fetch<{ alert: AlertFiringDto }>(`/api/alerts/${id}/acknowledge`, { method: 'POST', body: comment.trim() ? { comment } : {} })
    replace(r.alert)
    await refreshCount()
  }
  async function comment(id: number, body: string) {
    replace((await $fetch<{ alert: AlertFiringDto }>(`/api/alerts/${id}/comments`, { method: 'POST', body: { body } })).alert)
  }
  const setFilter = (change: Record<string, string | undefined>) => router.replace({ query: { ...route.query, ...change } })

  return { ...first, alerts, next, state, mine, loadOlder, acknowledge, comment, setFilter }
}
