import type { Knex } from 'knex'
import { writeAudit } from '../database/repositories/audit'
import { lockLotByCode, unitStepsOfLot, updateLotStatus, type LotRow, type LotStatus } from '../database/repositories/lot-detail'
import { findProductById } from '../database/repositories/products'
import { lotReadiness } from './lot-readiness'
import { lotUnitCounts } from '../database/repositories/unit-standing'
import { RuleError } from './rule-error'
import type { Signature } from '../utils/signature'
import { writeTransaction } from '../database/write-retries'

export type LotAction = 'hold' | 'resume' | 'release'

/**
 * Where each action may start. A hold also stops a released lot's units from shipping; lifting a hold always
 * returns the lot to open, so it must be released again. A released lot becomes shipped when its units'
 * shipments leave (services/shipments/dispatch.ts), never by hand.
 */
const FROM: Record<LotAction, LotStatus[]> = {
  hold: ['open', 'released'],
  resume: ['on_hold'],
  release: ['open'],
}

const REFUSAL: Record<LotAction, Partial<Record<LotStatus, string>>> = {
  hold: { on_hold: 'The lot is already on hold.', shipped: 'A shipped lot cannot be put on hold.' },
  resume: { open: 'The lot is not on hold.', released: 'The lot is not on hold.', shipped: 'The lot is not on hold.' },
  release: { on_hold: 'The lot is on hold: lift the hold before releasing it.', released: 'The lot is already released.', shipped: 'The lot has already shipped.' },
}

function view(l: LotRow) {
  return { status: l.status, holdReason: l.holdReason, releasedAt: l.releasedAt, shippedAt: l.shippedAt }
}

/** How many not-ready units a refusal names one by one; the count covers them all. */
const LISTED = 50

/**
 * A lot is released only when every unit is complete and passing at every step on calibrated stations, or under
 * a deviation whose reason goes into the audit row with the units it covers. A lot with no units never is.
 */
async function releaseDeviation(trx: Knex.Transaction, lot: LotRow, deviation: string | undefined) {
  const product = await findProductById(trx, lot.productId)
  // only the units the write path marked not ready are read; the count of all comes from the lot's counters
  const readiness = { units: (await lotUnitCounts(trx, lot.id)).units, notReady: lotReadiness(await unitStepsOfLot(trx, lot.id, { notReadyOnly: true }), product?.steps ?? []).notReady }
  if (readiness.units === 0) throw new RuleError(409, 'The lot has no tested units to release.')
  if (!readiness.notReady.length) return null
  if (!deviation) {
    const n = readiness.notReady.length
    throw new RuleError(409, `Not ready to release: ${n} of ${readiness.units} units. Complete them, or release under a deviation with its reason.`, [],
      { notReady: n, units: readiness.units, notReadyUnits: readiness.notReady.slice(0, LISTED) })
  }
  return { reason: deviation, notReady: readiness.notReady.length, units: readiness.units, serials: readiness.notReady.map((u) => u.serial) }
}

/**
 * The audit row goes in before the lot row changes: if the change then fails, the transaction takes the
 * audit row back with it, so a recorded change always happened. `reason` is the hold's reason, or for a
 * release the deviation it is made under.
 */
export async function changeLotStatus(db: Knex, actorId: number, code: string, action: LotAction, reason?: string, now = new Date(), signed?: Signature): Promise<LotStatus> {
  const status = await writeTransaction(db, async (trx) => {
    const lot = await lockLotByCode(trx, code)
    if (!lot) throw new RuleError(404, `No lot ${code}.`)
    if (!FROM[action].includes(lot.status)) throw new RuleError(409, REFUSAL[action][lot.status] ?? `A lot that is ${lot.status} cannot ${action}.`, [], { lotStatus: lot.status })
    const deviation = action === 'release' ? await releaseDeviation(trx, lot, reason) : null
    let change: Parameters<typeof updateLotStatus>[2]
    if (action === 'hold') change = { status: 'on_hold', holdReason: reason ?? null, releasedAt: null, releasedBy: null }
    else if (action === 'resume') change = { status: 'open', holdReason: null }
    else change = { status: 'released', releasedAt: now, releasedBy: actorId }
    await writeAudit(trx, {
      userId: actorId, action, entity: 'lot', entityId: code,
      before: view(lot),
      after: { ...view(lot), ...change, ...(action === 'resume' ? { liftedReason: lot.holdReason } : {}), ...(deviation ? { deviation } : {}), ...(signed ? { signed } : {}) },
    })
    await updateLotStatus(trx, lot.id, change)
    return change.status
  })
  return status
}
