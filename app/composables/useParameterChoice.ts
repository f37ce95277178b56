import type { Choice } from '~/components/analytics/ParameterPicker.vue'
import { useFiltersStore } from '~/stores/filters'

/**
 * The part and parameter a cross-lot view shows, kept in the query string (shareable URLs) and remembered
 * across pages: an empty URL opens on the part and parameter last looked at elsewhere.
 */
export async function useParameterChoice() {
  const route = useRoute()
  const router = useRouter()
  const filters = useFiltersStore()
  const text = (v: unknown) => (typeof v === 'string' && v !== '' ? v : null)

  if (!route.query.part && filters.part) await navigateTo({ query: { ...filters.query } }, { replace: true })

  const choice = computed<Choice>(() => ({
    part: text(route.query.part), name: text(route.query.name), qualifier: Number(route.query.qualifier ?? 0) || 0, step: text(route.query.step),
  }))
  watch(choice, (c) => { if (c.part) filters.choose({ part: c.part, ...(c.name ? { name: c.name, qualifier: c.qualifier, step: c.step ?? undefined } : {}) }) }, { immediate: true })

  // engineering and trial lots are left out unless the address takes them in
  const includeEngineering = computed(() => route.query.engineering === 'include')
  const engineeringQuery = computed(() => (includeEngineering.value ? { engineering: 'include' } : {}))

  function setQuery(change: Record<string, string | null | undefined>) {
    const query: Record<string, any> = { ...route.query, ...change }
    for (const k of Object.keys(query)) if (query[k] === null || query[k] === undefined || query[k] === '') delete query[k]
    router.replace({ query })
  }

  function setEngineering(include: boolean) { setQuery({ engineering: include ? 'include' : null }) }

  return { route, choice, text, setQuery, includeEngineering, engineeringQuery, setEngineering }
}
