import type { Knex } from 'knex'
import { writeAudit } from '../database/repositories/audit'
import { findProductByPartNumber } from '../database/repositories/products'
import { insertDisposition, policiesOf, replacePolicies } from '../database/repositories/retest'
import { RuleError } from './rule-error'
import type { RetestPolicy } from '../../shared/types/spec'
import { writeTransaction } from '../database/write-retries'

export type PolicyInput = { policies: { step: string; maxAttempts: number | null }[] }
export type DispositionInput = { step: string; kind: 'scrap' | 'rework' | 'deviation'; reason: string }

export async function retestPolicy(db: Knex, partNumber: string): Promise<RetestPolicy> {
  const p = await findProductByPartNumber(db, partNumber)
  if (!p) throw new RuleError(404, `No part ${partNumber}.`)
  const rows = new Map((await policiesOf(db, p.id)).map((r) => [r.step, r]))
  return { partNumber, policies: p.steps.map((step) => ({ step, maxAttempts: rows.get(step)?.maxAttempts ?? null, updatedAt: rows.get(step)?.updatedAt ?? null, updatedBy: rows.get(step)?.updatedBy ?? null })) }
}

/** Sets the attempts allowed at each step (null: no limit), replacing the product's whole policy. */
export async function setRetestPolicy(db: Knex, actorId: number, partNumber: string, input: PolicyInput): Promise<RetestPolicy> {
  await writeTransaction(db, async (trx) => {
    const p = await findProductByPartNumber(trx, partNumber, { forUpdate: true })
    if (!p) throw new RuleError(404, `No part ${partNumber}.`)
    const errors = input.policies.flatMap((x, i) => (p.steps.includes(x.step) ? [] : [{ pointer: `/policies/${i}/step`, message: `not a step of ${partNumber} (${p.steps.join(', ')})` }]))
    const steps = input.policies.map((x) => x.step)
    steps.forEach((s, i) => { if (steps.indexOf(s) !== i) errors.push({ pointer: `/policies/${i}/step`, message: 'named twice' }) })
    if (errors.length) throw new RuleError(422, 'Some steps are not valid.', errors)
    const before = await policiesOf(trx, p.id)
    const limits = input.policies.filter((x) => x.maxAttempts !== null).map((x) => ({ step: x.step, maxAttempts: x.maxAttempts! }))
    await writeAudit(trx, { userId: actorId, action: 'retest_policy', entity: 'product', entityId: partNumber, before: before.map((b) => ({ step: b.step, maxAttempts: b.maxAttempts })), after: limits })
    await replacePolicies(trx, p.id, limits, actorId)
  })
  return retestPolicy(db, partNumber)
}

/** Quality's decision about a unit at one step, made at its current number of attempts there. */
export async function addDisposition(db: Knex, actorId: number, partNumber: string, serial: string, input: DispositionInput, now = new Date()) {
  return writeTransaction(db, async (trx) => {
    const p = await findProductByPartNumber(trx, partNumber)
    if (!p) throw new RuleError(404, `No part ${partNumber}.`)
    const unit = await trx('units').where({ product_id: p.id, serial }).forUpdate().first('id')
    if (!unit) throw new RuleError(404, `No unit ${partNumber} ${serial}.`)
    if (!p.steps.includes(input.step)) throw new RuleError(422, `${input.step} is not a step of ${partNumber}.`, [{ pointer: '/step', message: `one of ${p.steps.join(', ')}` }])
    const st = await trx('unit_steps').where({ unit_id: unit.id, step: input.step }).first('attempts')
    const atAttempts = st?.attempts ?? 0
    const id = await insertDisposition(trx, { unitId: unit.id, step: input.step, kind: input.kind, reason: input.reason.trim(), atAttempts, by: actorId, at: now })
    await writeAudit(trx, { userId: actorId, action: 'disposition', entity: 'unit', entityId: `${partNumber}/${serial}`, after: { id, step: input.step, kind: input.kind, reason: input.reason.trim(), atAttempts } })
    return { id, partNumber, serial, step: input.step, kind: input.kind, reason: input.reason.trim(), atAttempts, decidedAt: now.toISOString() }
  })
}
