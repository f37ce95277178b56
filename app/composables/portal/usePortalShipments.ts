import type { ShipmentList } from '#shared/types/shipment'

/** Shipments the signed-in account may read: a customer its own released ones, staff every one. */
export function usePortalShipments(page: Ref<number>) {
  return useFetch<ShipmentList>('/api/shipments', {
    query: computed(() => ({ page: page.value, pageSize: 20, status: 'released,dispatched' })),
    watch: [page],
    default: (): ShipmentList => ({ shipments: [], total: 0, page: 1, pageSize: 20 }),
  })
}
