import type { SearchResults } from '#shared/types/search'

export type SearchHit = { group: 'Units' | 'Lots' | 'Parts'; key: string; label: string; detail: string; to: string; exact: boolean }

const MIN_LENGTH = 2

/**
 * The header's type-ahead: asks GET /api/search 200 ms after the last keystroke (from two characters on), drops
 * answers to an older query, and turns the answer into one list of hits in group order with the page each opens.
 */
export function useSearch(partPage: (partNumber: string) => string) {
  const text = ref('')
  const results = ref<SearchResults | null>(null)
  const pending = ref(false)
  const failed = ref(false)
  let timer: ReturnType<typeof setTimeout> | undefined
  let asked = 0

  watch(text, (value) => {
    clearTimeout(timer)
    const q = value.trim()
    if (q.length < MIN_LENGTH) { results.value = null; pending.value = false; return }
    pending.value = true
    timer = setTimeout(async () => {
      const mine = ++asked
      try {
        const r = await $fetch<SearchResults>('/api/search', { query: { q } })
        if (mine === asked) { results.value = r; failed.value = false }
      } catch {
        if (mine === asked) { results.value = null; failed.value = true }
      } finally {
        if (mine === asked) pending.value = false
      }
    }, 200)
  })

  const hits = computed<SearchHit[]>(() => {
    const r = results.value
    if (!r) return []
    const same = (a: string) => a.toLowerCase() === r.q.toLowerCase()
    return [
      ...r.units.items.map((u) => ({ group: 'Units' as const, key: `u:${u.partNumber}:${u.serial}`, label: u.serial, detail: `${u.partNumber} · lot ${u.lot}`, to: `/units/${encodeURIComponent(u.serial)}?part=${encodeURIComponent(u.partNumber)}`, exact: same(u.serial) })),
      ...r.lots.items.map((l) => ({ group: 'Lots' as const, key: `l:${l.code}`, label: l.code, detail: `${l.partNumber}${l.engineering ? ' · engineering' : ''}`, to: `/lots/${encodeURIComponent(l.code)}`, exact: same(l.code) })),
      ...r.parts.items.map((p) => ({ group: 'Parts' as const, key: `p:${p.partNumber}`, label: p.partNumber, detail: p.name, to: partPage(p.partNumber), exact: same(p.partNumber) })),
    ]
  })
  const more = computed(() => !!results.value && (results.value.units.more || results.value.lots.more || results.value.parts.more))

  /** Where Enter goes with nothing highlighted: the one exact match (a serial several parts share: the unit page lets one choose). */
  const exactTarget = computed(() => {
    const exact = hits.value.filter((h) => h.exact)
    const units = exact.filter((h) => h.group === 'Units')
    if (units.length > 1) return `/units/${encodeURIComponent(units[0]!.label)}`
    return exact[0]?.to ?? (hits.value.length === 1 ? hits.value[0]!.to : null)
  })

  function clear() { text.value = ''; results.value = null }
  return { text, hits, more, pending, failed, exactTarget, clear, minLength: MIN_LENGTH }
}
