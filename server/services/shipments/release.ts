import type { Knex } from 'knex'
import type { BlockingUnit } from '../../../shared/types/shipment'
import type { Signature } from '../../utils/signature'
import { writeAudit } from '../../database/repositories/audit'
import { findCustomer } from '../../database/repositories/customers'
import { dispositionsOf, policiesOfProducts } from '../../database/repositories/retest'
import { lockShipment, markReleased } from '../../database/repositories/shipments'
import { liveShipmentUnits, stepStatesOf, validCertificatesOf } from '../../database/repositories/shipment-units'
import { issueCertificates } from '../certificates/issue'
import { queueShipmentReleased } from '../mail/shipment-notice'
import { RuleError } from '../rule-error'
import { unitProblems } from './unit-checks'
import { writeTransaction } from '../../database/write-retries'

export type ReleaseInput = { deviation?: string; signed: Signature }

/**
 * Releases a draft: every unit in it must be of a released lot, pass every step of its product by its latest
 * result by test time, taken in calibration, within the retest limits (or with quality's rework or deviation
 * decision). A deviation with its reason covers the rest, except a lot on hold and a scrapped unit. The release,
 * its audit row and the units' certificates commit together.
 */
export async function releaseShipment(db: Knex, actorId: number, shipmentId: number, input: ReleaseInput, now = new Date()) {
  return writeTransaction(db, async (trx) => {
    const s = await lockShipment(trx, shipmentId)
    if (!s) throw new RuleError(404, 'No such shipment.')
    if (s.status !== 'draft') throw new RuleError(409, `Shipment ${s.code} is already ${s.status}.`)
    const customer = await findCustomer(trx, s.customerId)
    if (!customer?.active) throw new RuleError(409, `${customer?.name ?? 'The customer'} is deactivated: its shipments are not released.`)
    const units = await liveShipmentUnits(trx, shipmentId)
    if (!units.length) throw new RuleError(409, `Shipment ${s.code} has no units to release.`)
    const ids = units.map((u) => u.unitId)
    // a shared lock on the lots: a hold placed meanwhile waits for this release, or this release sees it
    const lots = new Map((await trx('lots').whereIn('id', [...new Set(units.map((u) => u.lotId))]).forShare().select('id', 'status')).map((l: any) => [l.id, l.status as string]))
    const [states, limits, dispositions] = await Promise.all([stepStatesOf(trx, ids), policiesOfProducts(trx, units.map((u) => u.productId)), dispositionsOf(trx, ids)])

    const deviation = input.deviation?.trim() || undefined
    const blocking: BlockingUnit[] = []
    const covered: string[] = []
    for (const u of units) {
      const problems = unitProblems({ ...u, lotStatus: lots.get(u.lotId) ?? u.lotStatus }, states.get(u.unitId) ?? [], limits.get(u.productId), dispositions.get(u.unitId) ?? [])
      if (!problems.length) continue
      if (deviation && !problems.some((p) => p.hard)) { covered.push(`${u.partNumber},${u.serial}`); continue }
      blocking.push({ partNumber: u.partNumber, serial: u.serial, problems: problems.filter((p) => !deviation || p.hard).map((p) => p.text) })
    }
    if (blocking.length) {
      const hint = deviation ? 'A hold or a scrap decision is not covered by a deviation.' : 'Resolve them, or release under a deviation with its reason.'
      throw new RuleError(409, `Shipment ${s.code} cannot be released: ${blocking.length} of ${units.length} units are blocking. ${hint}`, [], { blocking, units: units.length })
    }

    await writeAudit(trx, {
      userId: actorId, action: 'release', entity: 'shipment', entityId: s.code,
      before: { status: 'draft' },
      after: { status: 'released', units: units.length, signed: input.signed, ...(covered.length ? { deviation: { reason: deviation, units: covered.length, serials: covered } } : deviation ? { deviation: { reason: deviation, units: 0, serials: [] } } : {}) },
    })
    await markReleased(trx, shipmentId, actorId, now)
    // a unit shipping again after a return supersedes the certificate it still holds
    const previous = await validCertificatesOf(trx, ids)
    const issued = await issueCertificates(trx, { shipmentId, issuedBy: actorId, now, units: ids.map((unitId) => ({ unitId, supersedesId: previous.get(unitId) ?? null })) })
    // the notice exists exactly when the release commits
    await queueShipmentReleased(trx, { id: s.id, code: s.code, customerId: s.customerId, customerName: customer.name, units: units.length })
    return { code: s.code, status: 'released' as const, certificates: issued.length, covered: covered.length }
  })
}
