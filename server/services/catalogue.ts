import type { Knex } from 'knex'
import { writeAudit } from '../database/repositories/audit'
import { restandProductLots } from '../database/repositories/unit-standing'
import { findProductByPartNumber, insertProduct, updateProduct, type ProductFields, type ProductRecord } from '../database/repositories/products'
import { findSourceRevision, stepsInUse } from '../database/repositories/spec-revisions'
import { bumpCacheVersion } from '../database/repositories/cache-versions'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

export type NewProduct = Omit<ProductFields, 'jitterBandLoHz' | 'jitterBandHiHz'> & { jitterBandLoHz?: number; jitterBandHiHz?: number }
export type ProductChange = Partial<Omit<ProductFields, 'partNumber'>>

function auditView(p: ProductRecord | (ProductFields & { outputHz: number })) {
  return {
    partNumber: p.partNumber, name: p.name, multiplier: p.multiplier, inputHz: p.inputHz, outputHz: p.outputHz,
    steps: p.steps, jitterBandLoHz: p.jitterBandLoHz, jitterBandHiHz: p.jitterBandHiHz,
  }
}

function checkBand(lo: number, hi: number): void {
  if (!(lo < hi)) throw new RuleError(422, 'The jitter band must run from a lower to a higher offset.', [{ pointer: '/jitterBandHiHz', message: `must be above the lower edge (${lo} Hz)` }])
}

export async function createProduct(db: Knex, actorId: number, input: NewProduct): Promise<ProductRecord> {
  const fields: ProductFields = { ...input, jitterBandLoHz: input.jitterBandLoHz ?? 1e3, jitterBandHiHz: input.jitterBandHiHz ?? 1e6 }
  checkBand(fields.jitterBandLoHz, fields.jitterBandHiHz)
  const created = await writeTransaction(db, async (trx) => {
    if (await findProductByPartNumber(trx, fields.partNumber)) {
      throw new RuleError(409, `The part number ${fields.partNumber} already exists.`, [{ pointer: '/partNumber', message: 'already in use' }])
    }
    await insertProduct(trx, fields)
    await bumpCacheVersion(trx, 'catalogue')
    const product = (await findProductByPartNumber(trx, fields.partNumber))!
    await writeAudit(trx, { userId: actorId, action: 'create', entity: 'product', entityId: product.partNumber, after: auditView(product) })
    return product
  })
  return created
}

/**
 * The audit row goes in before the change itself: if the change then fails (a column constraint, say),
 * the transaction takes the audit row back with it.
 */
export async function changeProduct(db: Knex, actorId: number, partNumber: string, change: ProductChange, now = new Date()): Promise<ProductRecord | undefined> {
  const changed = await writeTransaction(db, async (trx) => {
    const before = await findProductByPartNumber(trx, partNumber, { forUpdate: true })
    if (!before) return undefined
    const next = {
      name: change.name ?? before.name, multiplier: change.multiplier ?? before.multiplier, inputHz: change.inputHz ?? before.inputHz,
      steps: change.steps ?? before.steps, jitterBandLoHz: change.jitterBandLoHz ?? before.jitterBandLoHz, jitterBandHiHz: change.jitterBandHiHz ?? before.jitterBandHiHz,
    }
    checkBand(next.jitterBandLoHz, next.jitterBandHiHz)
    const removed = before.steps.filter((s) => !next.steps.includes(s))
    if (removed.length) {
      const inForce = await findSourceRevision(trx, before.id, now)
      const used = await stepsInUse(trx, before.id, inForce ? [inForce.id] : [])
      const blocking = removed.filter((s) => used.has(s))
      if (blocking.length) {
        throw new RuleError(422, 'A step that limits still use cannot be removed.', blocking.map((s) => ({
          pointer: '/steps', message: `"${s}" is used by revision ${used.get(s)!.join(', ')}`,
        })))
      }
    }
    await writeAudit(trx, {
      userId: actorId, action: 'update', entity: 'product', entityId: partNumber,
      before: auditView(before), after: auditView({ ...next, partNumber, outputHz: next.multiplier * next.inputHz }),
    })
    await updateProduct(trx, before.id, next)
    await bumpCacheVersion(trx, 'catalogue')
    // the units' standings read the product's steps (writes wait on the product row we hold)
    if (JSON.stringify(next.steps) !== JSON.stringify(before.steps)) await restandProductLots(trx, before.id)
    return findProductByPartNumber(trx, partNumber)
  })
  return changed
}
