import type { InstrumentListItem, StationCalibrationView } from '#shared/types/calibration'

/** A station's instruments, current and former, with their holdings, calibration records and runs under each. */
export function useStationCalibration(id: Ref<number> | ComputedRef<number>) {
  return useFetch<StationCalibrationView>(() => `/api/stations/${id.value}/calibration`, {
    key: `station-calibration-${id.value}`,
    default: () => ({ stationId: id.value, current: [], former: [] }),
  })
}

/** Every registered instrument and the station holding it now. */
export function useInstrumentRegistry() {
  return useFetch<{ instruments: InstrumentListItem[] }>('/api/instruments', { key: 'instrument-registry', default: () => ({ instruments: [] }) })
}
