import type { LotSummary, Population } from '#shared/types/capability'

/** Yield, capability per parameter and revision, and the failure Pareto of one lot, for the chosen population. */
export function useLotSummary(code: Ref<string>, attempts: Ref<Population>) {
  return useFetch<LotSummary | null>(() => `/api/lots/${encodeURIComponent(code.value)}/summary`, { query: computed(() => ({ attempts: attempts.value })), default: () => null })
}
