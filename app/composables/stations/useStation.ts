import type { CalibrationState } from '#shared/utils/calibration'

export type StationToken = { id: number; hint: string; createdAt: string; createdBy: string | null; revokedAt: string | null; lastUsedAt: string | null }
export type StationInstrument = { id: number; assetNumber: string; kind: string; model: string; serial: string; calibrationDue: string | null; state: CalibrationState }
export type StationDetail = {
  id: number; name: string; location: string | null; description: string | null; lastSeenAt: string | null; createdAt: string
  runsToday: number; lastVerdict: 'pass' | 'fail' | null; activeTokenHint: string | null; owner: { id: number; name: string } | null
  instruments: StationInstrument[]; calibrationState: CalibrationState | null; tokens: StationToken[]
}

/** One station with its tokens and the instruments it holds now. */
export function useStation(id: Ref<number> | ComputedRef<number>) {
  return useFetch<{ station: StationDetail }>(() => `/api/stations/${id.value}`, { key: `station-${id.value}` })
}

/** Every station by name, for choosing where an instrument goes. */
export function useStationNames() {
  return useFetch<{ stations: { id: number; name: string }[] }>('/api/stations', {
    key: 'station-names', default: () => ({ stations: [] }),
    transform: (r) => ({ stations: r.stations.map((s) => ({ id: s.id, name: s.name })) }),
  })
}
