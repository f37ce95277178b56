import type { Ref } from 'vue'
import type { ProductRevisions, RevisionComparison, RevisionDetail } from '#shared/types/spec'

/** One revision with its product and limits. */
export function useRevision(id: Ref<number>) {
  return useFetch<RevisionDetail | null>(() => `/api/revisions/${id.value}`, { default: () => null })
}

/**
 * Comparing the revision with another of its product (kept in ?compare=): the product's other revisions to choose
 * from, what changes from the chosen one to this one, and the chosen one's limits (for its mask). The list of
 * revisions is read again whenever the revision is (an approval supersedes another).
 */
export function useRevisionCompare(id: Ref<number>, detail: Ref<RevisionDetail | null>) {
  const route = useRoute()
  const router = useRouter()
  const compareWith = ref<number | null>(route.query.compare ? Number(route.query.compare) : null)
  watch(compareWith, (v) => router.replace({ query: v ? { compare: String(v) } : {} }))
  const siblings = useFetch<ProductRevisions | null>(() => `/api/products/${encodeURIComponent(detail.value?.product.partNumber ?? '')}/revisions`, {
    immediate: !!detail.value, watch: [detail], default: () => null,
  })
  const comparison = useFetch<RevisionComparison | null>(() => `/api/revisions/${compareWith.value}/compare/${id.value}`, {
    immediate: !!compareWith.value, watch: [compareWith], default: () => null,
  })
  const other = useFetch<RevisionDetail | null>(() => `/api/revisions/${compareWith.value}`, { immediate: !!compareWith.value, watch: [compareWith], default: () => null })
  const otherRevisions = computed(() => (siblings.data.value?.revisions ?? []).filter((r) => r.id !== id.value))
  return { compareWith, comparison: comparison.data, otherDetail: other.data, otherRevisions, ready: Promise.all([siblings, comparison, other]) }
}
