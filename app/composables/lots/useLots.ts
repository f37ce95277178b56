import type { LotList } from '#shared/types/lot'

/** Every lot, newest first. */
export function useLots() {
  return useFetch<LotList>('/api/lots', { key: 'lots', default: () => ({ lots: [] }) })
}
