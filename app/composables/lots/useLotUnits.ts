import type { PaginationState, SortingState, ColumnVisibilityState } from '@tanstack/vue-table'
import type { LotUnitsPage } from '#shared/types/lot'

export type UnitFilters = { serial: string; verdict: string; minAttempts: string; station: string; from: string; to: string }
const NO_FILTERS: UnitFilters = { serial: '', verdict: '', minAttempts: '', station: '', from: '', to: '' }
const SORT_KEY: Record<string, string> = { serial: 'serial', verdict: 'verdict', lastStep: 'step', maxAttempts: 'attempts', runs: 'runs', station: 'station', lastTestedAt: 'date' }
const dayAfter = (d: string) => new Date(new Date(d).getTime() + 86_400_000).toISOString().slice(0, 10)

/**
 * A lot's units, one page at a time; the server sorts, filters and pages. Filters apply 300 ms after the last
 * keystroke and send the list back to its first page; the CSV link carries the same filters and sort.
 */
export function useLotUnits(code: Ref<string>) {
  const sorting = ref<SortingState>([{ id: 'serial', desc: false }])
  const pagination = ref<PaginationState>({ pageIndex: 0, pageSize: 50 })
  const columnVisibility = ref<ColumnVisibilityState>({ stepsTested: false, runs: false })

  const filters = reactive<UnitFilters>({ ...NO_FILTERS })
  const applied = ref({ ...filters })
  let debounce: ReturnType<typeof setTimeout> | undefined
  watch(filters, () => {
    clearTimeout(debounce)
    debounce = setTimeout(() => { applied.value = { ...filters }; pagination.value = { ...pagination.value, pageIndex: 0 } }, 300)
  })

  const filterQuery = computed(() => {
    const f = applied.value
    const s = sorting.value[0] ?? { id: 'serial', desc: false }
    const q: Record<string, string> = { sort: SORT_KEY[s.id] ?? 'serial', dir: s.desc ? 'desc' : 'asc' }
    if (f.serial.trim()) q.serial = f.serial.trim()
    if (f.verdict) q.verdict = f.verdict
    if (f.minAttempts) q.minAttempts = f.minAttempts
    if (f.station) q.station = f.station
    if (f.from) q.from = f.from
    if (f.to) q.to = dayAfter(f.to)
    return q
  })
  const query = computed(() => ({ ...filterQuery.value, page: pagination.value.pageIndex + 1, pageSize: pagination.value.pageSize }))
  const fetched = useFetch<LotUnitsPage | null>(() => `/api/lots/${encodeURIComponent(code.value)}/units`, { query, default: () => null })
  const csvHref = computed(() => `/api/lots/${encodeURIComponent(code.value)}/units.csv?${new URLSearchParams(filterQuery.value)}`)
  const pageCount = computed(() => fetched.data.value?.pageCount ?? 1)
  function clearFilters() { Object.assign(filters, NO_FILTERS) }

  // `ready`: the first page, for the page to await before it renders on the server
  return { ...fetched, ready: fetched, sorting, pagination, columnVisibility, filters, csvHref, pageCount, clearFilters }
}

export type LotUnitsHandle = ReturnType<typeof useLotUnits>
