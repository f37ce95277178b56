import type { PhaseNoiseView } from '#shared/types/capability'

/** Phase-noise percentiles of a lot at one step, over the values of one revision (null: the latest with values). */
export function useLotPhaseNoise(code: Ref<string>, step: Ref<string>, revision: Ref<number | null>) {
  const query = computed(() => ({ step: step.value, ...(revision.value !== null ? { revision: revision.value } : {}) }))
  return useFetch<PhaseNoiseView | null>(() => `/api/lots/${encodeURIComponent(code.value)}/phase-noise`, { query, default: () => null })
}
