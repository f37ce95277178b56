import type { ShipmentDetail } from '#shared/types/shipment'

/** One shipment with its units and each unit's certificate; null until it has loaded. */
export function usePortalShipment(id: Ref<string>) {
  return useFetch<ShipmentDetail | null>(() => `/api/shipments/${encodeURIComponent(id.value)}`, {
    watch: [id],
    default: () => null,
  })
}
