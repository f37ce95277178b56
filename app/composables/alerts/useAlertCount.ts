import type { AlertCount } from '#shared/types/alert'

/** The header's count of open alerts, one value for every component that shows or refreshes it. */
export function useAlertCount() {
  const count = useState<AlertCount | null>('alert-count', () => null)
  async function refresh() {
    try { count.value = await $fetch<AlertCount>('/api/alerts/count') } catch { /* keep the last count; the next poll tries again */ }
  }
  return { count, refresh }
}
