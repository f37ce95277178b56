import { h } from 'vue'
import {
  columnVisibilityFeature, createColumnHelper, rowPaginationFeature, rowSortingFeature, tableFeatures, useTable,
  type ColumnVisibilityState, type PaginationState, type SortingState, type Updater,
} from '@tanstack/vue-table'
import type { LotUnitRow } from '#shared/types/lot'
import VerdictChip from '~/components/ui/VerdictChip.vue'
// imported, not resolved by name: the page calls this after an await, where resolveComponent finds no instance
import { NuxtLink } from '#components'
import type { LotUnitsHandle } from './useLotUnits'
import PlantTime from '~/components/ui/PlantTime.vue'

/** Columns whose cells are numbers, right-aligned. */
export const NUMERIC_COLUMNS = new Set(['maxAttempts', 'runs', 'stepsTested'])

const resolve = <T>(next: Updater<T>, prev: T): T => (typeof next === 'function' ? (next as (old: T) => T)(prev) : next)

/** The units table over the list's state: sorting and paging change the request, not the rows in hand. */
export function useLotUnitsTable(units: LotUnitsHandle) {
  const { data, sorting, pagination, columnVisibility } = units
  const features = tableFeatures({ rowSortingFeature, rowPaginationFeature, columnVisibilityFeature })
  const col = createColumnHelper<typeof features, LotUnitRow>()
  const columns = col.columns([
    col.accessor('serial', { header: 'Serial', enableHiding: false, cell: (c) => h(NuxtLink, { to: `/units/${encodeURIComponent(c.getValue())}`, class: 'num font-bold text-copper-dark hover:underline' }, () => c.getValue()) }),
    col.accessor('verdict', { header: 'Verdict', cell: (c) => h(VerdictChip, { verdict: c.getValue() }) }),
    col.accessor('firstPass', { header: 'First pass', enableSorting: false, cell: (c) => (c.getValue() == null ? '—' : c.getValue() ? 'yes' : 'no') }),
    col.accessor('lastStep', { header: 'Last step', cell: (c) => c.getValue() ?? '—' }),
    col.accessor('stepsTested', { header: 'Steps tested', enableSorting: false }),
    col.accessor('maxAttempts', { header: 'Attempts', cell: (c) => h('span', { class: c.getValue() > 1 ? 'font-bold text-verdict-marginal' : '' }, String(c.getValue())) }),
    col.accessor('runs', { header: 'Runs' }),
    col.accessor('station', { header: 'Station', cell: (c) => c.getValue() ?? '—' }),
    col.accessor('lastTestedAt', { header: 'Last tested', cell: (c) => h(PlantTime, { at: c.getValue() }) }),
  ])
  return useTable({
    features, columns,
    data: computed(() => data.value?.units ?? []),
    rowCount: computed(() => data.value?.total ?? 0),
    // past a bounded count the page count is not known (-1), so Next stays open; never undefined (the adapter would
    // then hand the table this computed itself)
    pageCount: computed(() => (data.value?.totalExact === false ? -1 : Math.max(1, Math.ceil((data.value?.total ?? 0) / pagination.value.pageSize)))),
    manualSorting: true, manualPagination: true, enableMultiSort: false, enableSortingRemoval: false,
    state: computed(() => ({ sorting: sorting.value, pagination: pagination.value, columnVisibility: columnVisibility.value })),
    onSortingChange: (next: Updater<SortingState>) => { sorting.value = resolve(next, sorting.value); pagination.value = { ...pagination.value, pageIndex: 0 } },
    onPaginationChange: (next: Updater<PaginationState>) => { pagination.value = resolve(next, pagination.value) },
    onColumnVisibilityChange: (next: Updater<ColumnVisibilityState>) => { columnVisibility.value = resolve(next, columnVisibility.value) },
  })
}

export type LotUnitsTable = ReturnType<typeof useLotUnitsTable>
