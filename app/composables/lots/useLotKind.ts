import type { LotKindView } from '#shared/types/lot-kind'

/** Marks a lot engineering or production by hand (audited with the reason). */
export function useLotKind(code: () => string) {
  const busy = ref(false)
  async function mark(engineering: boolean, reason: string): Promise<LotKindView> {
    busy.value = true
    try {
      return await $fetch<LotKindView>(`/api/lots/${encodeURIComponent(code())}/engineering`, { method: 'PUT', body: { engineering, reason } })
    } finally {
      busy.value = false
    }
  }
  return { busy, mark }
}
