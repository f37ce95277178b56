import type { AuditPage } from '#shared/types/audit'
import { plantDayRange } from '~/utils/plant-time'
import { usePlantTime } from '~/composables/settings/usePlantTime'

export type AuditFilters = { entity: string; entityId: string; action: string; user: string; from: string; to: string }

const EMPTY: AuditPage = { page: 1, pageSize: 50, total: 0, pageCount: 1, entries: [], facets: { entities: [], actions: [], users: [] } }

/**
 * The audit log a page at a time, newest first. Filters and page live in the address, so a filtered view can be
 * linked and survives a reload; changing a filter goes back to the first page.
 */
export function useAuditLog() {
  const route = useRoute()
  const router = useRouter()
  const { zone } = usePlantTime()
  const q = (k: string) => (typeof route.query[k] === 'string' ? (route.query[k] as string) : '')
  const filters = reactive<AuditFilters>({ entity: q('entity'), entityId: q('entityId'), action: q('action'), user: q('user'), from: q('from'), to: q('to') })
  const page = ref(Number(q('page')) || 1)

  const query = computed(() => {
    const out: Record<string, string | number> = { page: page.value, pageSize: 50 }
    for (const [k, v] of Object.entries(filters)) if (v && k !== 'from' && k !== 'to') out[k] = v
    Object.assign(out, plantDayRange(filters.from, filters.to, zone.value))
    return out
  })
  watch(filters, () => { page.value = 1 })
  watch([filters, page], () => {
    const kept = Object.fromEntries(Object.entries({ ...filters, page: page.value > 1 ? String(page.value) : '' }).filter(([, v]) => v))
    router.replace({ query: kept })
  })
  const fetched = useFetch<AuditPage>('/api/audit', { key: 'audit-log', query, default: () => EMPTY })
  // `ready`: the first page, for the page to await before it renders on the server
  return { ...fetched, ready: fetched, filters, page }
}
