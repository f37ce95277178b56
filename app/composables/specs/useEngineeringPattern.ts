import type { EngineeringPatternView } from '#shared/types/lot-kind'

/** A product's engineering lot patterns: read, and saved by engineering staff. */
export function useEngineeringPattern(partNumber: () => string) {
  const url = () => `/api/products/${encodeURIComponent(partNumber())}/engineering-pattern`
  const fetched = useFetch<EngineeringPatternView | null>(url, { default: () => null })
  async function save(pattern: string) {
    fetched.data.value = await $fetch<EngineeringPatternView>(url(), { method: 'PUT', body: { pattern: pattern.trim() || null } })
  }
  return { ...fetched, save }
}
