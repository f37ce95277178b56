// Products and the specification in force, as station tooling and the parameter pickers read them.

/** GET /api/products — every product with the number of its revision in force now */
export type ProductBrief = {
  partNumber: string; name: string; multiplier: number; inputHz: number; outputHz: number
  steps: string[]; jitterBandHz: [number, number]; revisionInForce: number | null
}
export type ProductList = { products: ProductBrief[] }

/** One limit of the revision in force, its qualifier named by kind (offset in Hz or harmonic number). */
export type LimitInForce = {
  step: string; name: string; offsetHz?: number; harmonic?: number; lsl: number | null; usl: number | null; target: number | null; unit: string
  required: boolean; decisionRule: 'simple' | 'guarded'; defaultUncertainty: number | null; keyCharacteristic: boolean
}

/** GET /api/products/:partNumber/spec */
export type SpecInForce = { product: ProductBrief; revision: { revision: number; effectiveAt: string } | null; limits: LimitInForce[] }
