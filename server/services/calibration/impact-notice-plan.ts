// Who a review's notice goes to and what it names: every customer holding a valid certificate of a unit measured in the
// window, with those units, their valid certificates and the current decision. Superseded certificates are left out
// (their valid successor is named instead) and so are revoked ones (withdrawn already: the public check says so, and
// they no longer vouch for anything the finding could change).
import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import type { ImpactDecision } from '../../../shared/utils/calibration-impact'
import { certificatesOfUnits, decisionsOf, unitsOfWindow, type ImpactRow } from '../../database/repositories/calibration-impacts'

export type NoticeUnit = { partNumber: string; serial: string; certificates: string[]; decision: ImpactDecision | null; reason: string | null }
export type NoticePlanEntry = { customer: { id: number; code: string; name: string }; units: NoticeUnit[]; sha256: string }

/** The fingerprint of what a notice names: the same units, certificates and decisions give the same digest. */
export function noticeFingerprint(units: readonly NoticeUnit[]): string {
  const lines = units.map((u) => [u.partNumber, u.serial, [...u.certificates].sort().join(','), u.decision ?? '', u.reason ?? ''].join('\t')).sort()
  return createHash('sha256').update(lines.join('\n')).digest('hex')
}

export async function noticePlan(db: Knex, impact: ImpactRow): Promise<NoticePlanEntry[]> {
  const units = await unitsOfWindow(db, impact)
  const ids = units.map((u) => u.unitId)
  const [certs, decisions] = await Promise.all([certificatesOfUnits(db, ids), decisionsOf(db, impact.id, ids)])
  const byUnit = new Map(units.map((u) => [u.unitId, u]))
  const byCustomer = new Map<number, { customer: NoticePlanEntry['customer']; units: Map<number, NoticeUnit> }>()
  for (const c of certs) {
    if (c.status !== 'valid') continue
    const entry = byCustomer.get(c.customer.id) ?? { customer: c.customer, units: new Map() }
    byCustomer.set(c.customer.id, entry)
    const u = byUnit.get(c.unitId)!
    const d = decisions.get(c.unitId)
    const unit = entry.units.get(c.unitId) ?? { partNumber: u.partNumber, serial: u.serial, certificates: [], decision: d?.decision ?? null, reason: d?.reason ?? null }
    unit.certificates.push(c.number)
    entry.units.set(c.unitId, unit)
  }
  return [...byCustomer.values()]
    .map((e) => {
      const list = [...e.units.values()].sort((a, b) => a.partNumber.localeCompare(b.partNumber) || a.serial.localeCompare(b.serial))
      return { customer: e.customer, units: list, sha256: noticeFingerprint(list) }
    })
    .sort((a, b) => a.customer.name.localeCompare(b.customer.name))
}
