import type { TrendsView } from '#shared/types/capability'

/** One parameter of a part lot by lot; fetched only once a part and a parameter are chosen. */
export function useLotTrends(query: Ref<Record<string, string | number | undefined>>, ready: Ref<boolean>) {
  return useFetch<TrendsView | null>('/api/trends', { query, immediate: ready.value, watch: [query], default: () => null })
}
