import type { PaginationState, SortingState, ColumnVisibilityState } from '@tanstack/vue-table'
import type { LocationQuery } from 'vue-router'
import type { LotUnitsPage } from '#shared/types/lot'
import { plantDayRange } from '~/utils/plant-time'
import { usePlantTime } from '~/composables/settings/usePlantTime'

/** `match`: '' for serials that start with the text (fast), 'contains' for anywhere in them (reads the whole lot) */
export type UnitFilters = { serial: string; match: string; verdict: string; minAttempts: string; station: string; from: string; to: string }
const NO_FILTERS: UnitFilters = { serial: '', match: '', verdict: '', minAttempts: '', station: '', from: '', to: '' }
const FILTER_KEYS = Object.keys(NO_FILTERS) as (keyof UnitFilters)[]
const SORT_KEY: Record<string, string> = { serial: 'serial', verdict: 'verdict', lastStep: 'step', maxAttempts: 'attempts', runs: 'runs', station: 'station', lastTestedAt: 'date' }
const SORT_COLUMN = Object.fromEntries(Object.entries(SORT_KEY).map(([col, key]) => [key, col]))
const PAGE_SIZES = [25, 50, 100, 200]
const one = (v: unknown) => (typeof v === 'string' ? v : Array.isArray(v) && typeof v[0] === 'string' ? v[0] : '')

/** The list's state as the address holds it: filters as typed (`to` is the last day included), sort, page and size. */
function fromAddress(q: LocationQuery) {
  const filters = Object.fromEntries(FILTER_KEYS.map((k) => [k, one(q[k])])) as UnitFilters
  const column = SORT_COLUMN[one(q.sort)] ?? 'serial'
  const page = Math.max(1, Number.parseInt(one(q.page), 10) || 1)
  const size = Number(one(q.pageSize))
  return { filters, sorting: [{ id: column, desc: one(q.dir) === 'desc' }] as SortingState, pagination: { pageIndex: page - 1, pageSize: PAGE_SIZES.includes(size) ? size : 50 } }
}

/**
 * A lot's units, one page at a time; the server sorts, filters and pages. Filters, sort and page live in the address
 * (reload, back and forward restore them; a filtered list can be sent on). Filters apply 300 ms after the last
 * keystroke and send the list back to its first page; the CSV link carries the same filters and sort.
 */
export function useLotUnits(code: Ref<string>) {
  const route = useRoute()
  const router = useRouter()
  const { zone } = usePlantTime()
  // the route object follows navigation away too: only this page's addresses are read or written
  const page = route.name
  const onPage = () => route.name === page
  const start = fromAddress(route.query)
  const sorting = ref<SortingState>(start.sorting)
  const pagination = ref<PaginationState>(start.pagination)
  const columnVisibility = ref<ColumnVisibilityState>({ stepsTested: false, runs: false })

  const filters = reactive<UnitFilters>({ ...start.filters })
  const applied = ref({ ...filters })
  let debounce: ReturnType<typeof setTimeout> | undefined
  const same = (a: UnitFilters, b: UnitFilters) => FILTER_KEYS.every((k) => a[k] === b[k])
  watch(filters, () => {
    clearTimeout(debounce)
    if (same(filters, applied.value)) return
    debounce = setTimeout(() => { applied.value = { ...filters }; pagination.value = { ...pagination.value, pageIndex: 0 } }, 300)
  })

  // what the list shows, written to the address; a change of address (back, forward, a link) is read back
  const addressQuery = computed(() => {
    const f = applied.value
    const s = sorting.value[0] ?? { id: 'serial', desc: false }
    const q: Record<string, string> = {}
    for (const k of FILTER_KEYS) if (f[k].trim()) q[k] = f[k].trim()
    if (s.id !== 'serial') q.sort = SORT_KEY[s.id] ?? 'serial'
    if (s.desc) q.dir = 'desc'
    if (pagination.value.pageIndex > 0) q.page = String(pagination.value.pageIndex + 1)
    if (pagination.value.pageSize !== 50) q.pageSize = String(pagination.value.pageSize)
    return q
  })
  watch(addressQuery, (q) => {
    if (!onPage()) return
    const current = Object.fromEntries(Object.entries(route.query).filter(([k]) => ![...FILTER_KEYS, 'sort', 'dir', 'page', 'pageSize'].includes(k)))
    const next = { ...current, ...q }
    if (JSON.stringify(next) !== JSON.stringify(route.query)) router.push({ query: next })
  })
  watch(() => route.query, (q) => {
    if (!onPage()) return
    const s = fromAddress(q)
    if (!same(s.filters, applied.value)) { Object.assign(filters, s.filters); applied.value = { ...s.filters } }
    if (JSON.stringify(s.sorting) !== JSON.stringify(sorting.value)) sorting.value = s.sorting
    if (s.pagination.pageIndex !== pagination.value.pageIndex || s.pagination.pageSize !== pagination.value.pageSize) pagination.value = s.pagination
  })

  const filterQuery = computed(() => {
    const f = applied.value
    const s = sorting.value[0] ?? { id: 'serial', desc: false }
    const q: Record<string, string> = { sort: SORT_KEY[s.id] ?? 'serial', dir: s.desc ? 'desc' : 'asc' }
    if (f.serial.trim()) q.serial = f.serial.trim()
    if (f.serial.trim() && f.match === 'contains') q.serialMatch = 'contains'
    if (f.verdict) q.verdict = f.verdict
    if (f.minAttempts) q.minAttempts = f.minAttempts
    if (f.station) q.station = f.station
    Object.assign(q, plantDayRange(f.from, f.to, zone.value))
    return q
  })
  // the cursor each page handed out for the next: stepping on reads the index from there instead of counting rows off
  const cursors = new Map<string, string>()
  const cursorKey = (pageIndex: number) => JSON.stringify([filterQuery.value, pagination.value.pageSize, pageIndex])
  const query = computed(() => {
    const q: Record<string, string | number> = { ...filterQuery.value, page: pagination.value.pageIndex + 1, pageSize: pagination.value.pageSize }
    const after = cursors.get(cursorKey(pagination.value.pageIndex))
    if (after) q.after = after
    return q
  })
  const fetched = useFetch<LotUnitsPage | null>(() => `/api/lots/${encodeURIComponent(code.value)}/units`, { query, default: () => null })
  watch(fetched.data, (d) => { if (d?.next) cursors.set(cursorKey(d.page), d.next) }, { immediate: true })
  const csvHref = computed(() => `/api/lots/${encodeURIComponent(code.value)}/units.csv?${new URLSearchParams(filterQuery.value)}`)
  const pageCount = computed(() => fetched.data.value?.pageCount ?? 1)
  // past a bounded count the list knows only that there are more
  const totalExact = computed(() => fetched.data.value?.totalExact ?? true)
  function clearFilters() { Object.assign(filters, NO_FILTERS) }

  // `ready`: the first page, for the page to await before it renders on the server
  return { ...fetched, ready: fetched, sorting, pagination, columnVisibility, filters, csvHref, pageCount, totalExact, clearFilters }
}

export type LotUnitsHandle = ReturnType<typeof useLotUnits>
