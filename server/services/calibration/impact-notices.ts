// Sending a review's notices: one message per customer holding valid certificates of units in the window, to its
// contacts who receive certificate notices, naming its serials, certificates and decisions. Signed, audited and queued
// in one transaction. A customer already told exactly the same is skipped unless quality asks to send again.
import type { Knex } from 'knex'
import type { ImpactNoticesResult } from '../../../shared/types/calibration-impact'
import type { Signature } from '../../utils/signature'
import { writeAudit } from '../../database/repositories/audit'
import { insertNotice, latestNotices, recordAndInstrument } from '../../database/repositories/calibration-impacts'
import { contactsOf } from '../../database/repositories/customers'
import { makerIdentity } from '../certificates/maker'
import { enqueueMail } from '../mail/outbox'
import { calibrationImpact } from '../mail/templates'
import { RuleError } from '../rule-error'
import { noticePlan } from './impact-notice-plan'
import { lockedImpact } from './impact-review'
import { writeTransaction } from '../../database/write-retries'

export async function sendNotices(db: Knex, actorId: number, impactId: number, o: { resend: boolean; signed: Signature }, now = new Date()): Promise<ImpactNoticesResult> {
  return writeTransaction(db, async (trx) => {
    const impact = await lockedImpact(trx, impactId)
    const plan = await noticePlan(trx, impact)
    const undecided = plan.flatMap((p) => p.units.filter((u) => u.decision === null).map((u) => ({ customer: p.customer.name, partNumber: u.partNumber, serial: u.serial })))
    if (undecided.length) {
      throw new RuleError(409, `${undecided.length} certified ${undecided.length === 1 ? 'unit has' : 'units have'} no decision yet: decide them before telling customers.`, [], { undecided: undecided.slice(0, 100) })
    }
    const { record, instrument } = await recordAndInstrument(trx, impact.recordId)
    const last = await latestNotices(trx, impactId)
    const result: ImpactNoticesResult = { sent: [], skipped: [] }
    const named: unknown[] = []
    for (const p of plan) {
      if (!o.resend && last.get(p.customer.id)?.sha256 === p.sha256) { result.skipped.push({ customer: p.customer.name, reason: 'already_noticed' }); continue }
      const to = (await contactsOf(trx, p.customer.id)).filter((c) => c.receivesCertificates && c.email).map((c) => c.email)
      if (!to.length) { result.skipped.push({ customer: p.customer.name, reason: 'no_contacts' }); continue }
      const mail = calibrationImpact({
        makerName: makerIdentity().name, customerName: p.customer.name, instrument: { kind: instrument.kind, model: instrument.model },
        calibratedOn: record.calibratedOn.toISOString(), windowFrom: impact.from.toISOString(), windowTo: impact.to.toISOString(),
        units: p.units.map((u) => ({ partNumber: u.partNumber, serial: u.serial, certificates: u.certificates, decision: u.decision!, reason: u.reason })),
      })
      const mailId = await enqueueMail(trx, { to, template: 'calibrationImpact', ...mail }, now)
      await insertNotice(trx, { impactId, customerId: p.customer.id, mailId, sha256: p.sha256, units: p.units.length, by: actorId, at: now })
      result.sent.push({ customer: p.customer.name, units: p.units.length, recipients: to.length, mailId })
      named.push({ customer: p.customer.code, mailId, units: p.units.map((u) => ({ unit: `${u.partNumber}/${u.serial}`, certificates: u.certificates, decision: u.decision })) })
    }
    await writeAudit(trx, {
      userId: actorId, action: 'calibration_impact_notify', entity: 'calibration_impact', entityId: impactId,
      after: {
        resend: o.resend, signed: o.signed, skipped: result.skipped,
        sent: named,
      },
    })
    return result
  })
}
