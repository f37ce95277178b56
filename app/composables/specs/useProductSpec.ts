import type { ProductList, SpecInForce } from '#shared/types/product'

/** Every product with its steps, for choosing one. */
export function useProducts() {
  return useFetch<ProductList>('/api/products', { key: 'products', default: () => ({ products: [] }) })
}

/** The limits in force now of the chosen product; nothing is fetched until one is chosen. */
export function useSpecInForce(partNumber: Ref<string | null>) {
  return useFetch<Pick<SpecInForce, 'limits' | 'revision'>>(() => `/api/products/${encodeURIComponent(partNumber.value ?? '')}/spec`, {
    key: () => `spec-in-force-${partNumber.value ?? ''}`,
    immediate: !!partNumber.value, watch: [partNumber], default: () => ({ limits: [], revision: null }),
  })
}
