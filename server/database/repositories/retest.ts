import type { Knex } from 'knex'
import { inSlices } from './shipment-units'

export type RetestPolicyRow = { step: string; maxAttempts: number; updatedAt: string; updatedBy: string | null }

export async function policiesOf(db: Knex, productId: number): Promise<RetestPolicyRow[]> {
  const rows = await db('retest_policies as r').leftJoin('users as u', 'u.id', 'r.updated_by').where('r.product_id', productId)
    .select('r.step', 'r.max_attempts', 'r.updated_at', 'u.name')
  return rows.map((r: any) => ({ step: r.step, maxAttempts: r.max_attempts, updatedAt: new Date(r.updated_at).toISOString(), updatedBy: r.name ?? null }))
}

/** Limits of several products: product id → step → max attempts. */
export async function policiesOfProducts(db: Knex, productIds: readonly number[]): Promise<Map<number, Map<string, number>>> {
  const out = new Map<number, Map<string, number>>()
  if (!productIds.length) return out
  const rows = await db('retest_policies').whereIn('product_id', [...new Set(productIds)]).select('product_id', 'step', 'max_attempts')
  for (const r of rows as any[]) {
    const m = out.get(r.product_id) ?? new Map<string, number>()
    m.set(r.step, r.max_attempts)
    out.set(r.product_id, m)
  }
  return out
}

export async function replacePolicies(trx: Knex, productId: number, policies: { step: string; maxAttempts: number }[], by: number): Promise<void> {
  await trx('retest_policies').where({ product_id: productId }).delete()
  if (policies.length) await trx('retest_policies').insert(policies.map((p) => ({ product_id: productId, step: p.step, max_attempts: p.maxAttempts, updated_by: by })))
}

export type Disposition = { id: number; unitId: number; step: string; kind: 'scrap' | 'rework' | 'deviation'; reason: string; atAttempts: number; decidedAt: string; decidedBy: string | null }

/** Every disposition of the given units, oldest first. */
export async function dispositionsOf(db: Knex, unitIds: readonly number[]): Promise<Map<number, Disposition[]>> {
  const rows = await inSlices(unitIds, (ids) => db('unit_dispositions as d').leftJoin('users as u', 'u.id', 'd.decided_by').whereIn('d.unit_id', ids)
    .orderBy('d.decided_at').orderBy('d.id').select('d.id', 'd.unit_id', 'd.step', 'd.kind', 'd.reason', 'd.at_attempts', 'd.decided_at', 'u.name'))
  const out = new Map<number, Disposition[]>()
  for (const r of rows as any[]) {
    const list = out.get(r.unit_id) ?? []
    list.push({ id: r.id, unitId: r.unit_id, step: r.step, kind: r.kind, reason: r.reason, atAttempts: r.at_attempts, decidedAt: new Date(r.decided_at).toISOString(), decidedBy: r.name ?? null })
    out.set(r.unit_id, list)
  }
  return out
}

export async function insertDisposition(trx: Knex, d: { unitId: number; step: string; kind: string; reason: string; atAttempts: number; by: number; at: Date }): Promise<number> {
  const [id] = await trx('unit_dispositions').insert({ unit_id: d.unitId, step: d.step, kind: d.kind, reason: d.reason, at_attempts: d.atAttempts, decided_by: d.by, decided_at: d.at })
  return id!
}
