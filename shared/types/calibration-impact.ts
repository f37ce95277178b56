// What the calibration impact routes answer, as services build them and pages read them. Times are ISO 8601 UTC.
import type { ImpactDecision } from '../utils/calibration-impact'

export type ImpactStatus = 'open' | 'closed'
export type ImpactCounts = { runs: number; units: number; lots: number; certificates: number }

export type ImpactListItem = {
  id: number
  status: ImpactStatus
  instrument: { id: number; assetNumber: string; kind: string; model: string }
  record: { id: number; certificateNumber: string | null; calibratedOn: string }
  window: { from: string; to: string }
  counts: ImpactCounts
  decided: number
  openedAt: string
  closedAt: string | null
}

export type ImpactList = { impacts: ImpactListItem[] }

export type ImpactCertificate = {
  number: string
  status: 'valid' | 'superseded' | 'revoked'
  customer: { id: number; code: string; name: string }
  shipment: { id: number; code: string }
}

export type ImpactDecisionView = { decision: ImpactDecision; reason: string | null; decidedBy: string; decidedAt: string }

export type ImpactUnit = {
  partNumber: string
  serial: string
  lot: string
  /** runs measured with the instrument inside the window */
  runs: number
  firstRunAt: string
  lastRunAt: string
  /** the unit's standing now: fail when any step's latest result fails, pass when every step passes, else null */
  latestVerdict: 'pass' | 'fail' | null
  certificates: ImpactCertificate[]
  decision: ImpactDecisionView | null
}

export type ImpactLot = { code: string; partNumber: string; units: number; runs: number; decided: number }

export type ImpactCustomer = {
  id: number; code: string; name: string
  /** units holding a valid certificate of this customer, and how many of them are decided */
  units: number; decided: number; certificates: number
  /** contacts who receive certificate notices */
  contacts: number
  lastNoticeAt: string | null
  /** the decisions changed since the last notice (or none was sent) */
  noticeDue: boolean
}

export type ImpactNotice = { id: number; customer: string; units: number; sentAt: string; sentBy: string; mailId: number }

export type ImpactDetail = {
  id: number
  status: ImpactStatus
  record: { id: number; certificateNumber: string | null; laboratory: string | null; calibratedOn: string; dueAt: string }
  instrument: { id: number; assetNumber: string; kind: string; model: string; serial: string }
  window: { from: string; to: string; basis: { kind: 'in_tolerance' | 'earliest'; recordId: number | null; certificateNumber: string | null } }
  counts: ImpactCounts
  decided: { total: number; no_impact: number; retest: number; recall: number }
  openedAt: string
  closed: { at: string; by: string | null } | null
  lots: ImpactLot[]
  customers: ImpactCustomer[]
  units: { items: ImpactUnit[]; total: number; page: number; pageSize: number }
  notices: ImpactNotice[]
}

export type ImpactDecisionsResult = { changed: number; unchanged: number; decided: number; units: number }

export type ImpactNoticesResult = {
  sent: { customer: string; units: number; recipients: number; mailId: number }[]
  skipped: { customer: string; reason: 'already_noticed' | 'no_contacts' }[]
}
