// Issuing and withdrawing certificates inside the caller's transaction (a shipment's release, a reissue, a return).
// Everything is read and written in batches, so a shipment of thousands of units costs a few dozen statements.
import type { Knex } from 'knex'
import type { CertificateSnapshot } from '../../../shared/types/certificate'
import { ROLE_LABELS, type Role } from '../../../shared/utils/roles'
import { issuerSource, shipmentSource } from '../../database/repositories/certificate-sources'
import {
  certificatesById, changeStatuses, validCertificatesOfUnits, insertCertificates, markCertified, recomputeCertified, reserveNumbers, unitsOfCertificates,
} from '../../database/repositories/certificates'
import { RuleError } from '../rule-error'
import { certificateNumber, makerIdentity, verifyUrl } from './maker'
import { TEMPLATE_VERSION } from './template'
import { newVerifyCode } from './verify-code'
import { unitStatements } from './snapshot'

export type IssueInput = {
  shipmentId: number; issuedBy: number; now: Date
  units: { unitId: number; supersedesId?: number | null }[]
}
export type IssuedCertificate = { unitId: number; certificateId: number; number: string; verifyCode: string }

export async function issueCertificates(trx: Knex.Transaction, input: IssueInput): Promise<IssuedCertificate[]> {
  if (!input.units.length) return []
  const unitIds = input.units.map((u) => u.unitId)
  if (new Set(unitIds).size !== unitIds.length) throw new RuleError(422, 'A unit is named twice in one issue.')
  const [shipment, issuer] = await Promise.all([shipmentSource(trx, input.shipmentId), issuerSource(trx, input.issuedBy)])
  if (!shipment) throw new RuleError(404, `No shipment with id ${input.shipmentId}.`)
  if (!issuer) throw new RuleError(422, `No user with id ${input.issuedBy}.`)

  const predecessorIds = input.units.map((u) => u.supersedesId).filter((id): id is number => id != null)
  const predecessors = new Map((await certificatesById(trx, predecessorIds)).map((p) => [p.id, p]))
  for (const u of input.units) {
    if (u.supersedesId == null) continue
    const p = predecessors.get(u.supersedesId)
    if (!p || p.unitId !== u.unitId) throw new RuleError(422, `Certificate ${u.supersedesId} is not a certificate of unit ${u.unitId}.`)
    if (p.status === 'revoked') throw new RuleError(409, `Certificate ${p.number} is revoked and cannot be superseded.`)
  }
  // one valid certificate per unit: a unit that has one gets a new one only by superseding it
  const supersedes = new Map(input.units.map((u) => [u.unitId, u.supersedesId ?? null]))
  const stillValid = (await validCertificatesOfUnits(trx, unitIds)).filter((c) => supersedes.get(c.unitId) !== c.id)
  if (stillValid.length) {
    throw new RuleError(409, `Unit(s) already hold a valid certificate that this issue does not supersede: ${stillValid.slice(0, 10).map((c) => c.number).join(', ')}.`)
  }

  const statements = await unitStatements(trx, unitIds)
  const maker = makerIdentity()
  const year = input.now.getUTCFullYear()
  const first = await reserveNumbers(trx, year, input.units.length)
  const issuedAt = input.now.toISOString()
  const issuedBy = { name: issuer.name, role: ROLE_LABELS[issuer.role as Role] ?? issuer.role }

  const rows = input.units.map((u, i) => {
    const number = certificateNumber(maker.numberPrefix, year, first + i)
    const verifyCode = newVerifyCode()
    const snapshot: CertificateSnapshot = {
      maker: { name: maker.name, address: maker.address },
      number, verifyCode, verifyUrl: verifyUrl(maker.siteUrl, verifyCode), issuedAt, issuedBy,
      customer: { name: shipment.customerName, code: shipment.customerCode },
      shipment: { code: shipment.code, customerPo: shipment.customerPo },
      ...statements.get(u.unitId)!,
      supersedes: u.supersedesId != null ? predecessors.get(u.supersedesId)!.number : null,
    }
    return {
      number, verifyCode, unitId: u.unitId, shipmentId: shipment.id, customerId: shipment.customerId, templateVersion: TEMPLATE_VERSION,
      snapshot: JSON.stringify(snapshot), issuedAt: input.now, issuedBy: input.issuedBy, supersedesId: u.supersedesId ?? null,
    }
  })
  const ids = await insertCertificates(trx, rows)

  const superseding = rows.filter((r) => r.supersedesId != null).map((r) => ({ id: r.supersedesId!, reason: `Superseded by ${r.number}.` }))
  if (superseding.length) await changeStatuses(trx, 'superseded', input.now, input.issuedBy, superseding)
  await markCertified(trx, unitIds)
  return rows.map((r) => ({ unitId: r.unitId, certificateId: ids.get(r.number)!, number: r.number, verifyCode: r.verifyCode }))
}

export type RevokeInput = { certificateIds: number[]; by: number | null; reason: string; now: Date }

/** Withdraws certificates (valid or superseded); a unit left without a valid certificate is no longer certified. */
export async function revokeCertificates(trx: Knex.Transaction, input: RevokeInput): Promise<void> {
  if (!input.certificateIds.length) return
  const reason = input.reason.trim()
  if (!reason) throw new RuleError(422, 'A revocation needs a reason.', [{ pointer: '/reason', message: 'must not be empty' }])
  await changeStatuses(trx, 'revoked', input.now, input.by, input.certificateIds.map((id) => ({ id, reason })))
  await recomputeCertified(trx, await unitsOfCertificates(trx, input.certificateIds))
}
