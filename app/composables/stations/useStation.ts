import type { StationDetail, StationSummary } from '#shared/types/station'

/** One station with its tokens and the instruments it holds now. */
export function useStation(id: Ref<number> | ComputedRef<number>) {
  return useFetch<{ station: StationDetail } | null>(() => `/api/stations/${id.value}`, { key: () => `station-${id.value}`, default: () => null })
}

/** Issues a new token (POST: the answer carries it, once) or revokes every token (DELETE). */
export function stationTokenAction(id: number, method: 'POST' | 'DELETE') {
  return $fetch<{ token?: string; revoked?: number }>(`/api/stations/${id}/token`, { method })
}

/** Every station by name, for choosing where an instrument goes. */
export function useStationNames() {
  return useFetch<{ stations: Pick<StationSummary, 'id' | 'name'>[] }>('/api/stations', {
    key: 'station-names', default: () => ({ stations: [] }),
    transform: (r) => ({ stations: r.stations.map((s) => ({ id: s.id, name: s.name })) }),
  })
}
