import type { SpecOverview } from '#shared/types/spec'

/** Every product with its revision in force, approved revisions still to take effect, and open drafts. */
export function useSpecOverview() {
  return useFetch<SpecOverview>('/api/specs', { key: 'spec-overview', default: () => ({ products: [] }) })
}

/** Creates a product; the answer's problem (pointers per field) is the caller's to show. */
export function createProduct(body: { partNumber: string; name: string; multiplier: number; inputHz: number; steps: string[] }) {
  return $fetch('/api/products', { method: 'POST', body })
}
