// What the calibration impact pages read: the list of reviews and one review with its lots, customers, units and notices.
import type { Knex } from 'knex'
import type { ImpactCustomer, ImpactDetail, ImpactList, ImpactUnit } from '../../../shared/types/calibration-impact'
import {
  certificateNumberOfRecord, certificatesOfUnits, countWindow, decisionTallies, decisionsOf, latestNotices, listImpactRows, lotsOfWindow,
  noticeContactCounts, noticesOf, recordAndInstrument, unitsOfWindowPage, type ImpactRow,
} from '../../database/repositories/calibration-impacts'
import { productSteps, stepStatesOf } from '../../database/repositories/shipment-units'
import { overallVerdict } from '../shipments/unit-verdict'
import { openMissingReviews } from './impact-open'
import { noticePlan } from './impact-notice-plan'
import { existingImpact } from './impact-review'

const iso = (d: Date) => new Date(d).toISOString()

/** One page of the review's units, optionally of one lot. */
export type ImpactUnitsPage = { page: number; pageSize: number; lot?: string }

export async function impactList(db: Knex, viewerId: number): Promise<ImpactList> {
  // records entered before reviews existed get theirs on first view
  await openMissingReviews(db, viewerId)
  const rows = await listImpactRows(db)
  // counted now, so a run imported late into a window shows at once (a handful of indexed reads per review)
  const counts = await Promise.all(rows.map((r) => countWindow(db, { instrumentId: r.instrumentId, from: r.from, to: r.to })))
  return {
    impacts: rows.map((r, i) => ({
      id: r.id, status: r.status, instrument: r.instrument,
      record: { ...r.record, calibratedOn: iso(r.record.calibratedOn) },
      window: { from: iso(r.from), to: iso(r.to) },
      counts: counts[i]!,
      decided: r.decided, openedAt: iso(r.openedAt), closedAt: r.closedAt ? iso(r.closedAt) : null,
    })),
  }
}

/** The customers holding valid certificates of the window's units, with what a notice to each would name. */
async function customersOf(db: Knex, impact: ImpactRow): Promise<ImpactCustomer[]> {
  const plan = await noticePlan(db, impact)
  const [contacts, last] = await Promise.all([noticeContactCounts(db, plan.map((p) => p.customer.id)), latestNotices(db, impact.id)])
  return plan.map((p) => ({
    id: p.customer.id, code: p.customer.code, name: p.customer.name,
    units: p.units.length, decided: p.units.filter((u) => u.decision !== null).length, certificates: p.units.reduce((n, u) => n + u.certificates.length, 0),
    contacts: contacts.get(p.customer.id) ?? 0,
    lastNoticeAt: last.get(p.customer.id) ? iso(last.get(p.customer.id)!.sentAt) : null,
    noticeDue: last.get(p.customer.id)?.sha256 !== p.sha256,
  }))
}

export async function impactDetail(db: Knex, id: number, { page, pageSize, lot }: ImpactUnitsPage): Promise<ImpactDetail> {
  const impact = await existingImpact(db, id)
  const w = impact
  const [ri, basisNumber, lots, unitPage, tallies, customers, notices] = await Promise.all([
    recordAndInstrument(db, impact.recordId), certificateNumberOfRecord(db, impact.basisRecordId), lotsOfWindow(db, w, impact.id),
    unitsOfWindowPage(db, w, { lot, limit: pageSize, offset: (page - 1) * pageSize }), decisionTallies(db, impact.id), customersOf(db, impact), noticesOf(db, impact.id),
  ])
  const unitIds = unitPage.rows.map((u) => u.unitId)
  const [certs, decisions, states, steps] = await Promise.all([
    certificatesOfUnits(db, unitIds), decisionsOf(db, impact.id, unitIds), stepStatesOf(db, unitIds), productSteps(db, unitPage.rows.map((u) => u.productId)),
  ])
  const items: ImpactUnit[] = unitPage.rows.map((u) => {
    const d = decisions.get(u.unitId)
    return {
      partNumber: u.partNumber, serial: u.serial, lot: u.lot, runs: u.runs, firstRunAt: iso(u.firstAt), lastRunAt: iso(u.lastAt),
      latestVerdict: overallVerdict(steps.get(u.productId) ?? [], states.get(u.unitId) ?? []),
      certificates: certs.filter((c) => c.unitId === u.unitId).map(({ unitId: _, ...c }) => c),
      decision: d ? { decision: d.decision, reason: d.reason, decidedBy: d.decidedBy, decidedAt: iso(d.decidedAt) } : null,
    }
  })
  return {
    id: impact.id, status: impact.status,
    record: { ...ri.record, calibratedOn: iso(ri.record.calibratedOn), dueAt: iso(ri.record.dueAt) },
    instrument: ri.instrument,
    window: { from: iso(impact.from), to: iso(impact.to), basis: { kind: impact.basis, recordId: impact.basisRecordId, certificateNumber: basisNumber } },
    // counted now: a run imported late into the window shows at once
    counts: { units: lots.reduce((n, l) => n + l.units, 0), runs: lots.reduce((n, l) => n + l.runs, 0), lots: lots.length, certificates: customers.reduce((n, c) => n + c.certificates, 0) },
    decided: { total: tallies.no_impact + tallies.retest + tallies.recall, ...tallies },
    openedAt: iso(impact.openedAt), closed: impact.closedAt ? { at: iso(impact.closedAt), by: impact.closedBy } : null,
    lots, customers, units: { items, total: unitPage.total, page, pageSize }, notices: notices.map((n) => ({ ...n, sentAt: iso(n.sentAt) })),
  }
}
