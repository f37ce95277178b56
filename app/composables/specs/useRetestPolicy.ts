import type { RetestPolicy } from '#shared/types/spec'

export function useRetestPolicy(partNumber: () => string) {
  const url = () => `/api/products/${encodeURIComponent(partNumber())}/retest-policy`
  const fetched = useFetch<RetestPolicy>(url, { default: () => ({ partNumber: '', policies: [] }) })
  async function save(policies: { step: string; maxAttempts: number | null }[]) {
    fetched.data.value = await $fetch<RetestPolicy>(url(), { method: 'PUT', body: { policies } })
  }
  return { ...fetched, save }
}
