import type { StationComparisonView } from '#shared/types/capability'

/** One parameter compared across the stations that measured it; fetched only once a part and a parameter are chosen. */
export function useStationComparison(query: Ref<Record<string, string | number | undefined>>, ready: Ref<boolean>) {
  return useFetch<StationComparisonView | null>('/api/stations/compare', { query, immediate: ready.value, watch: [query], default: () => null })
}
