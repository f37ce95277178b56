import type { StationRecentRun } from '#shared/types/station-runs'

/** The station's latest runs, newest first. */
export function useStationRuns(id: Ref<number> | ComputedRef<number>) {
  return useFetch<{ runs: StationRecentRun[] }>(() => `/api/stations/${id.value}/runs`, { key: `station-runs-${id.value}`, default: () => ({ runs: [] }) })
}
