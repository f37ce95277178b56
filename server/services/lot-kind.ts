// Engineering and trial lots: the product's code patterns, applied to a lot when it is first seen, and the mark a
// person sets or clears on a lot. Both writes are audited in their own transaction.
import type { Knex } from 'knex'
import { writeAudit } from '../database/repositories/audit'
import { lockLotByCode, updateLotKind } from '../database/repositories/lot-detail'
import { engineeringPatternOf, findProductByPartNumber, updateEngineeringPattern } from '../database/repositories/products'
import { normaliseLotPatterns, parseLotPatterns } from '../../shared/utils/lot-kind'
import type { EngineeringPatternView, LotKindView } from '../../shared/types/lot-kind'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

export async function engineeringPattern(db: Knex, partNumber: string): Promise<EngineeringPatternView> {
  const p = await findProductByPartNumber(db, partNumber)
  if (!p) throw new RuleError(404, `No part ${partNumber}.`)
  const { pattern, engineeringLots } = await engineeringPatternOf(db, p.id)
  return { partNumber, pattern, patterns: parseLotPatterns(pattern).patterns, engineeringLots }
}

/** Sets the product's patterns (null or empty: none). They mark lots first seen from now on; earlier lots keep their mark. */
export async function setEngineeringPattern(db: Knex, actorId: number, partNumber: string, input: { pattern: string | null }): Promise<EngineeringPatternView> {
  const { patterns, problems } = parseLotPatterns(input.pattern)
  if (problems.length) throw new RuleError(422, 'The lot patterns are not valid.', problems.map((message) => ({ pointer: '/pattern', message })))
  await writeTransaction(db, async (trx) => {
    const p = await findProductByPartNumber(trx, partNumber, { forUpdate: true })
    if (!p) throw new RuleError(404, `No part ${partNumber}.`)
    const before = (await engineeringPatternOf(trx, p.id)).pattern
    const after = normaliseLotPatterns(patterns)
    if (before === after) return
    await updateEngineeringPattern(trx, p.id, after)
    await writeAudit(trx, { userId: actorId, action: 'engineering_pattern', entity: 'product', entityId: partNumber, before: { pattern: before }, after: { pattern: after } })
  })
  return engineeringPattern(db, partNumber)
}

/** Marks a lot engineering (or production again) by hand, with the reason in the audit row; the same state again changes nothing. */
export async function setLotKind(db: Knex, actorId: number, code: string, input: { engineering: boolean; reason: string }): Promise<LotKindView> {
  if (input.reason.trim().length < 3) throw new RuleError(422, 'Give a reason for the change.', [{ pointer: '/reason', message: 'at least 3 characters besides spaces' }])
  return writeTransaction(db, async (trx) => {
    const lot = await lockLotByCode(trx, code)
    if (!lot) throw new RuleError(404, `No lot ${code}.`)
    if (lot.engineering === input.engineering) return { code, engineering: lot.engineering, engineeringSource: lot.engineeringSource, changed: false }
    await updateLotKind(trx, lot.id, input.engineering)
    await writeAudit(trx, {
      userId: actorId, action: input.engineering ? 'mark_engineering' : 'mark_production', entity: 'lot', entityId: code,
      before: { engineering: lot.engineering, source: lot.engineeringSource }, after: { engineering: input.engineering, source: 'hand', reason: input.reason.trim() },
    })
    return { code, engineering: input.engineering, engineeringSource: 'hand' as const, changed: true }
  })
}
