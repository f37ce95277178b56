import type { Knex } from 'knex'
import { listEffectiveRevisions, listProducts, findProductByPart, revisionAt, type ProductInfo } from '../database/repositories/spec-lookup'
import { qualifierFields } from './ingest/run-view'
import type { ProductBrief, SpecInForce } from '../../shared/types/product'

function productView(p: ProductInfo, revision: number | null): ProductBrief {
  return {
    partNumber: p.partNumber, name: p.name, multiplier: p.multiplier, inputHz: p.inputHz, outputHz: p.outputHz,
    steps: p.steps, jitterBandHz: p.jitterBand, revisionInForce: revision,
  }
}

export async function productsWithRevision(db: Knex, now = new Date()): Promise<ProductBrief[]> {
  const products = await listProducts(db)
  return Promise.all(products.map(async (p) => productView(p, revisionAt(await listEffectiveRevisions(db, p.id), now)?.revision ?? null)))
}

/** The revision in force now and its limits, in the shape station tooling reads. */
export async function specInForce(db: Knex, partNumber: string, now = new Date()): Promise<SpecInForce | undefined> {
  const p = await findProductByPart(db, partNumber)
  if (!p) return undefined
  const rev = revisionAt(await listEffectiveRevisions(db, p.id), now)
  return {
    product: productView(p, rev?.revision ?? null),
    revision: rev ? { revision: rev.revision, effectiveAt: rev.effectiveAt.toISOString() } : null,
    limits: (rev?.limits ?? []).map((l) => ({
      step: l.step, name: l.name, ...qualifierFields(l.name, l.qualifier), lsl: l.lsl, usl: l.usl, target: l.target, unit: l.unit,
      required: l.required, decisionRule: l.rule, defaultUncertainty: l.defaultUncertainty, keyCharacteristic: l.key,
    })),
  }
}
