import type { LotDetailReply } from '#shared/types/lot'

/** One lot: status, product and counts. */
export function useLot(code: Ref<string>) {
  return useFetch<LotDetailReply | null>(() => `/api/lots/${encodeURIComponent(code.value)}`, { default: () => null })
}
