import { defineStore } from 'pinia'

export type Population = 'first' | 'all'
export type ParameterChoice = { part: string; name: string; qualifier: number; step: string }

// The part/parameter last looked at, so trends and station comparison open on it; the URL stays the source of truth.
export const useFiltersStore = defineStore('filters', () => {
  const part = ref<string | null>(null)
  const name = ref<string | null>(null)
  const qualifier = ref<number>(0)
  const step = ref<string | null>(null)
  const attempts = ref<Population>('first')

  function choose(p: Partial<ParameterChoice>) {
    if (p.part !== undefined) part.value = p.part
    if (p.name !== undefined) name.value = p.name
    if (p.qualifier !== undefined) qualifier.value = p.qualifier
    if (p.step !== undefined) step.value = p.step
  }

  /** The remembered choice as query parameters (empty when nothing was chosen yet). */
  const query = computed(() => {
    if (!part.value) return {}
    return {
      part: part.value,
      ...(name.value ? { name: name.value } : {}),
      ...(name.value && qualifier.value ? { qualifier: String(qualifier.value) } : {}),
      ...(step.value ? { step: step.value } : {}),
    }
  })

  return { part, name, qualifier, step, attempts, choose, query }
})
