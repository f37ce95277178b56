import type { ShipmentList } from '#shared/types/shipment'

export function useShipments() {
  const route = useRoute()
  const query = computed(() => ({ status: route.query.status || undefined, q: route.query.q || undefined, page: route.query.page || undefined }))
  const list = useFetch<ShipmentList>('/api/shipments', { query, default: () => ({ shipments: [], total: 0, page: 1, pageSize: 50 }) })
  async function create(body: { customerId: number; partNumber?: string | null; customerPo?: string | null; plannedShipDate?: string | null; notes?: string | null }) {
    return $fetch<{ shipment: { id: number } }>('/api/shipments', { method: 'POST', body })
  }
  return { ...list, create }
}
