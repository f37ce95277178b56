import type { Knex } from 'knex'
import { findProductByPartNumber, listProductRecords, type ProductRecord } from './products'

export type ProductInfo = {
  id: number; partNumber: string; name: string; multiplier: number; inputHz: number; outputHz: number
  steps: string[]; jitterBand: [number, number]
}

export type SpecLimit = {
  step: string; name: string; qualifier: number; lsl: number | null; usl: number | null; target: number | null
  unit: string; required: boolean; rule: 'simple' | 'guarded'; defaultUncertainty: number | null; key: boolean
}

export type RevisionInForce = { id: number; revision: number; effectiveAt: Date; approvedAt: Date | null; status: string; limits: SpecLimit[] }

/** The catalogue record in the shape judgement and station tooling read. */
function toProductInfo(p: ProductRecord): ProductInfo {
  return {
    id: p.id, partNumber: p.partNumber, name: p.name, multiplier: p.multiplier, inputHz: p.inputHz, outputHz: p.outputHz,
    steps: p.steps, jitterBand: [p.jitterBandLoHz, p.jitterBandHiHz],
  }
}

export async function findProductByPart(db: Knex, partNumber: string): Promise<ProductInfo | undefined> {
  const p = await findProductByPartNumber(db, partNumber)
  return p && toProductInfo(p)
}

export async function listProducts(db: Knex): Promise<ProductInfo[]> {
  return (await listProductRecords(db)).map(toProductInfo)
}

export function toLimit(l: any): SpecLimit {
  return {
    step: l.step, name: l.name, qualifier: l.qualifier, lsl: l.lsl, usl: l.usl, target: l.target, unit: l.unit,
    required: !!l.required, rule: l.rule, defaultUncertainty: l.default_uncertainty, key: !!l.key_characteristic,
  }
}

/** Approved and superseded revisions of a product, newest effective first, each with its limits. */
export async function listEffectiveRevisions(db: Knex, productId: number): Promise<RevisionInForce[]> {
  const revs = await db('spec_revisions').where({ product_id: productId }).whereIn('status', ['approved', 'superseded'])
    .whereNotNull('effective_at').orderBy('effective_at', 'desc').orderBy('revision', 'desc')
  if (!revs.length) return []
  const limits = await db('spec_limits').whereIn('revision_id', revs.map((r: any) => r.id)).orderBy('id')
  return revs.map((r: any) => ({
    id: r.id, revision: r.revision, effectiveAt: r.effective_at, approvedAt: r.approved_at ?? null, status: r.status,
    limits: limits.filter((l: any) => l.revision_id === r.id).map(toLimit),
  }))
}

/** The revision in force at time t: the latest effective one not after t. */
export function revisionAt(revisions: RevisionInForce[], t: Date): RevisionInForce | undefined {
  return revisions.find((r) => r.effectiveAt.getTime() <= t.getTime())
}
