import type { Knex } from 'knex'
import type { Signature } from '../../utils/signature'
import { writeAudit } from '../../database/repositories/audit'
import { dispositionsOf } from '../../database/repositories/retest'
import { productSteps, stepStatesOf } from '../../database/repositories/shipment-units'
import { issueCertificates, revokeCertificates } from '../certificates/issue'
import { RuleError } from '../rule-error'
import { overallVerdict } from './unit-verdict'
import { writeTransaction } from '../../database/write-retries'

async function lockCertificate(trx: Knex, number: string) {
  const c = await trx('certificates as c').join('units as u', 'u.id', 'c.unit_id').where('c.number', number).forUpdate()
    .first('c.id', 'c.number', 'c.status', 'c.unit_id', 'c.shipment_id', 'c.retest_run_id', 'u.product_id', 'u.serial')
  if (!c) throw new RuleError(404, `No certificate ${number}.`)
  return c as { id: number; number: string; status: string; unit_id: number; shipment_id: number; retest_run_id: number | null; product_id: number; serial: string }
}

export async function revokeCertificate(db: Knex, actorId: number, number: string, reason: string, signed: Signature, now = new Date()) {
  return writeTransaction(db, async (trx) => {
    const c = await lockCertificate(trx, number)
    if (c.status === 'revoked') throw new RuleError(409, `Certificate ${number} is already revoked.`)
    await writeAudit(trx, { userId: actorId, action: 'revoke', entity: 'certificate', entityId: number, before: { status: c.status }, after: { status: 'revoked', reason: reason.trim(), signed } })
    await revokeCertificates(trx as Knex.Transaction, { certificateIds: [c.id], by: actorId, reason, now })
    return { number, status: 'revoked' as const }
  })
}

/**
 * A valid certificate is issued again for the same unit and shipment, superseding it: after a passing retest
 * (the certificate notes the run) or to correct what it states. The unit must pass every step now, must not be
 * scrapped, and must still be in the shipment.
 */
export async function reissueCertificate(db: Knex, actorId: number, number: string, signed: Signature, now = new Date()) {
  return writeTransaction(db, async (trx) => {
    const c = await lockCertificate(trx, number)
    if (c.status !== 'valid') throw new RuleError(409, `Certificate ${number} is ${c.status}: only a valid certificate is reissued.`)
    const member = await trx('shipment_units').where({ shipment_id: c.shipment_id, unit_id: c.unit_id }).first('returned_at')
    if (!member || member.returned_at) throw new RuleError(409, `Unit ${c.serial} was returned: it gets a new certificate when it ships again.`)
    const [states, steps, dispositions] = await Promise.all([stepStatesOf(trx, [c.unit_id]), productSteps(trx, [c.product_id]), dispositionsOf(trx, [c.unit_id])])
    if ((dispositions.get(c.unit_id) ?? []).some((d) => d.kind === 'scrap')) throw new RuleError(409, `Unit ${c.serial} is scrapped.`)
    if (overallVerdict(steps.get(c.product_id) ?? [], states.get(c.unit_id) ?? []) !== 'pass') throw new RuleError(409, `Unit ${c.serial} does not pass every step now: revoke the certificate instead.`)
    const [issued] = await issueCertificates(trx as Knex.Transaction, { shipmentId: c.shipment_id, issuedBy: actorId, now, units: [{ unitId: c.unit_id, supersedesId: c.id }] })
    await writeAudit(trx, { userId: actorId, action: 'reissue', entity: 'certificate', entityId: number, before: { status: 'valid' }, after: { status: 'superseded', by: issued!.number, retestRunId: c.retest_run_id, signed } })
    return { number: issued!.number, supersedes: number }
  })
}
