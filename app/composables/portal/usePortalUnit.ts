import type { PortalUnitView } from '#shared/types/portal'

/** One shipped unit by part and serial; null until it has loaded. */
export function usePortalUnit(partNumber: Ref<string>, serial: Ref<string>) {
  return useFetch<PortalUnitView | null>(() => `/api/portal/units/${encodeURIComponent(partNumber.value)}/${encodeURIComponent(serial.value)}`, {
    watch: [partNumber, serial],
    default: () => null,
  })
}
