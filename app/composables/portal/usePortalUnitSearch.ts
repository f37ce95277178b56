import type { PortalUnitSearch } from '#shared/types/portal'

/** Shipped serials starting with the typed text, a page at a time; runs only once something is typed. */
export function usePortalUnitSearch() {
  const q = ref('')
  const page = ref(1)
  const typed = refDebounced(q, 250)
  const result = useFetch<PortalUnitSearch>('/api/portal/units', {
    query: computed(() => ({ q: typed.value.trim(), page: page.value, pageSize: 10 })),
    watch: [typed, page],
    immediate: false,
    server: false,
    default: (): PortalUnitSearch => ({ q: '', units: [], total: 0, page: 1, pageSize: 10 }),
  })
  watch(typed, () => { page.value = 1 })
  watch([typed, page], () => { if (typed.value.trim()) result.execute() })
  return { q, page, typed, ...result }
}

/** A ref that follows another after it has stopped changing for `ms`. */
function refDebounced(source: Ref<string>, ms: number): Ref<string> {
  const out = ref(source.value)
  let timer: ReturnType<typeof setTimeout> | undefined
  watch(source, (v) => {
    clearTimeout(timer)
    timer = setTimeout(() => { out.value = v }, ms)
  })
  return out
}
