// Quality's decision for each unit of a review: many units at once, or every unit of one lot. All or nothing: one
// unknown unit or missing reason refuses the whole request with a pointer at it. One audit row names every change.
import type { Knex } from 'knex'
import type { ImpactDecisionsResult } from '../../../shared/types/calibration-impact'
import { decisionNeedsReason, type ImpactDecision } from '../../../shared/utils/calibration-impact'
import { writeAudit } from '../../database/repositories/audit'
import { closeImpactRow, countWindow, decisionsOf, setImpactCounts, unitsOfWindow, upsertDecisions } from '../../database/repositories/calibration-impacts'
import type { FieldError } from '../../../shared/types/problem'
import { RuleError } from '../rule-error'
import { lockedImpact } from './impact-review'
import { writeTransaction } from '../../database/write-retries'

export type DecisionEntry = { partNumber: string; serial: string; decision: ImpactDecision; reason?: string }
export type DecisionsInput = { decisions: DecisionEntry[] } | { lot: string; decision: ImpactDecision; reason?: string }

const clean = (r: string | undefined) => (r?.trim() ? r.trim() : null)

export async function recordDecisions(db: Knex, actorId: number, impactId: number, input: DecisionsInput, now = new Date()): Promise<ImpactDecisionsResult> {
  return writeTransaction(db, async (trx) => {
    const impact = await lockedImpact(trx, impactId)
    if (impact.status === 'closed') throw new RuleError(409, 'The review is closed: its decisions stand as recorded.')
    const w = impact
    const units = await unitsOfWindow(trx, w)
    const byName = new Map(units.map((u) => [`${u.partNumber}\u0000${u.serial}`, u]))
    const errors: FieldError[] = []
    const wanted: { unitId: number; partNumber: string; serial: string; decision: ImpactDecision; reason: string | null }[] = []
    if ('lot' in input) {
      const ofLot = units.filter((u) => u.lot === input.lot)
      if (!ofLot.length) errors.push({ pointer: '/lot', message: 'no unit of this lot was measured with the instrument in the window' })
      if (decisionNeedsReason(input.decision) && !clean(input.reason)) errors.push({ pointer: '/reason', message: 'a reason is required for retest and recall' })
      for (const u of ofLot) wanted.push({ unitId: u.unitId, partNumber: u.partNumber, serial: u.serial, decision: input.decision, reason: clean(input.reason) })
    } else {
      const seen = new Set<number>()
      input.decisions.forEach((d, i) => {
        const u = byName.get(`${d.partNumber.trim()}\u0000${d.serial.trim()}`)
        if (!u) errors.push({ pointer: `/decisions/${i}/serial`, message: 'not measured with the instrument in the window' })
        else if (seen.has(u.unitId)) errors.push({ pointer: `/decisions/${i}/serial`, message: 'named twice in this request' })
        if (decisionNeedsReason(d.decision) && !clean(d.reason)) errors.push({ pointer: `/decisions/${i}/reason`, message: 'a reason is required for retest and recall' })
        if (u && !seen.has(u.unitId)) wanted.push({ unitId: u.unitId, partNumber: u.partNumber, serial: u.serial, decision: d.decision, reason: clean(d.reason) })
        if (u) seen.add(u.unitId)
      })
    }
    if (errors.length) throw new RuleError(422, `${errors.length === 1 ? 'One decision was' : `${errors.length} decisions were`} refused; nothing was recorded.`, errors)
    const current = await decisionsOf(trx, impactId, wanted.map((u) => u.unitId))
    const changed = wanted.filter((u) => {
      const c = current.get(u.unitId)
      return !c || c.decision !== u.decision || c.reason !== u.reason
    })
    if (changed.length) {
      await upsertDecisions(trx, impactId, changed, actorId, now)
      const name = (u: { partNumber: string; serial: string }) => `${u.partNumber}/${u.serial}`
      await writeAudit(trx, {
        userId: actorId, action: 'calibration_impact_decide', entity: 'calibration_impact', entityId: impactId,
        before: changed.map((u) => ({ unit: name(u), decision: current.get(u.unitId)?.decision ?? null, reason: current.get(u.unitId)?.reason ?? null })),
        after: changed.map((u) => ({ unit: name(u), decision: u.decision, reason: u.reason })),
      })
    }
    await setImpactCounts(trx, impactId, await countWindow(trx, w))
    const decided = (await decisionsOf(trx, impactId)).size
    return { changed: changed.length, unchanged: wanted.length - changed.length, decided, units: units.length }
  })
}

/** Closes a review once every unit of its window has a decision. */
export async function closeReview(db: Knex, actorId: number, impactId: number, now = new Date()): Promise<{ id: number; status: 'closed'; closedAt: string }> {
  return writeTransaction(db, async (trx) => {
    const impact = await lockedImpact(trx, impactId)
    if (impact.status === 'closed') throw new RuleError(409, 'The review is already closed.')
    const w = impact
    const units = await unitsOfWindow(trx, w)
    const decisions = await decisionsOf(trx, impactId)
    const undecided = units.filter((u) => !decisions.has(u.unitId))
    if (undecided.length) {
      throw new RuleError(409, `${undecided.length} ${undecided.length === 1 ? 'unit has' : 'units have'} no decision yet.`, [], {
        undecided: undecided.slice(0, 100).map((u) => ({ partNumber: u.partNumber, serial: u.serial })),
      })
    }
    const counts = await countWindow(trx, w)
    await setImpactCounts(trx, impactId, counts)
    await closeImpactRow(trx, impactId, actorId, now)
    const tally: Record<string, number> = {}
    for (const d of decisions.values()) tally[d.decision] = (tally[d.decision] ?? 0) + 1
    await writeAudit(trx, {
      userId: actorId, action: 'calibration_impact_close', entity: 'calibration_impact', entityId: impactId,
      before: { status: 'open' }, after: { status: 'closed', counts, decisions: tally },
    })
    return { id: impactId, status: 'closed' as const, closedAt: now.toISOString() }
  })
}
