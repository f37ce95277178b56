/** The staff a station may be given to, and the change of its owner. */
export function useStationOwner(stationId: Ref<number> | ComputedRef<number>) {
  const candidates = useFetch<{ people: { id: number; name: string; role: string }[] }>('/api/stations/owner-candidates', {
    key: 'station-owner-candidates', default: () => ({ people: [] }),
  })
  async function save(ownerUserId: number | null) {
    return $fetch<{ ownerUserId: number | null }>(`/api/stations/${stationId.value}/owner`, { method: 'PUT', body: { ownerUserId } })
  }
  return { candidates: candidates.data, save }
}
