import type { UnitHistoryReply } from '#shared/types/unit-history'

/** One unit by serial with every run and its RF checks; `part` chooses when two parts share the serial. */
export function useUnitHistory(serial: Ref<string>, part: Ref<string | undefined>) {
  return useFetch<UnitHistoryReply>(() => `/api/units/${encodeURIComponent(serial.value)}`, {
    query: computed(() => (part.value ? { part: part.value } : {})),
    watch: [serial, part],
    default: (): UnitHistoryReply => ({ unit: null, runs: [] }),
  })
}
