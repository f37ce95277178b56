import type { ProductRevisions } from '#shared/types/spec'

/** A product with all its revisions, newest first. */
export function useProductRevisions(part: Ref<string>) {
  return useFetch<ProductRevisions | null>(() => `/api/products/${encodeURIComponent(part.value)}/revisions`, { key: () => `product-revisions-${part.value}`, default: () => null })
}

/** Opens the product's next draft (409 with `draftId` when one is open already). */
export function openDraftRevision(part: string) {
  return $fetch<{ id: number }>(`/api/products/${encodeURIComponent(part)}/revisions`, { method: 'POST' })
}

export type ProductChange = { name: string; multiplier: number; inputHz: number; steps: string[]; jitterBandLoHz: number; jitterBandHiHz: number }

export function changeProduct(part: string, body: ProductChange) {
  return $fetch(`/api/products/${encodeURIComponent(part)}`, { method: 'PATCH', body })
}
