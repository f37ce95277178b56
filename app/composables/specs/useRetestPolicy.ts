type Policy = { step: string; maxAttempts: number | null; updatedAt: string | null; updatedBy: string | null }

export function useRetestPolicy(partNumber: () => string) {
  const url = () => `/api/products/${encodeURIComponent(partNumber())}/retest-policy`
  const fetched = useFetch<{ partNumber: string; policies: Policy[] }>(url, { default: () => ({ partNumber: '', policies: [] }) })
  async function save(policies: { step: string; maxAttempts: number | null }[]) {
    fetched.data.value = await $fetch(url(), { method: 'PUT', body: { policies } })
  }
  return { ...fetched, save }
}
