// Shipments as the staff pages and the customer portal read them.
import type { CertificateStatus } from './certificate'

export type ShipmentStatus = 'draft' | 'released' | 'dispatched'

export type ShipmentCustomer = { id: number; code: string; name: string }

export type ShipmentListItem = {
  id: number
  code: string
  status: ShipmentStatus
  customer: ShipmentCustomer
  customerPo: string | null
  /** YYYY-MM-DD */
  plannedShipDate: string | null
  /** units in the shipment now (returned ones not counted) */
  units: number
  createdAt: string
  releasedAt: string | null
  dispatchedAt: string | null
  carrier: string | null
  trackingRef: string | null
}

export type ShipmentList = { shipments: ShipmentListItem[]; total: number; page: number; pageSize: number }

/** `retested`: a retest after issue touched it (revoked it, or passed and waits for reissue) */
export type ShipmentUnitCertificate = { number: string; status: CertificateStatus; issuedAt: string; rendered: boolean; retested: boolean }

export type ShipmentUnit = {
  partNumber: string
  productName: string
  serial: string
  lot: string
  /** pass when every step of the product has a passing latest result, fail when any latest is a fail, null while incomplete */
  latestVerdict: 'pass' | 'fail' | null
  /** the latest result at the product's last step, by test time */
  finalTestedAt: string | null
  calibrationLapsed: boolean
  addedAt: string
  /** set once the unit came back from the customer; it is no longer part of the shipment */
  returnedAt: string | null
  /** the certificate issued for this unit in this shipment (the newest one) */
  certificate: ShipmentUnitCertificate | null
}

export type ShipmentHeader = ShipmentListItem & {
  /** staff only */
  notes: string | null
  createdBy: string | null
  releasedBy: string | null
  dispatchedBy: string | null
  /** the part every unit must be of, when the shipment is restricted to one */
  partNumber: string | null
}

export type ShipmentDetail = {
  shipment: ShipmentHeader
  /** units in serial order, paged (`page`, `pageSize`; by default all of them) */
  units: ShipmentUnit[]
  unitsTotal: number
  returnedTotal: number
  page: number
  pageSize: number
}

export type SerialRowVerdict = 'ok' | 'unknown_serial' | 'wrong_part' | 'in_other_shipment' | 'already_in_shipment' | 'not_passing' | 'duplicate' | 'ambiguous' | 'malformed'

export type SerialPreviewRow = {
  /** 1-based line of the list as sent */
  line: number
  text: string
  verdict: SerialRowVerdict
  message: string | null
  partNumber: string | null
  serial: string | null
  lot: string | null
}

export type SerialPreview = {
  rows: SerialPreviewRow[]
  counts: Record<SerialRowVerdict, number>
  /** units the list would add (rows whose verdict is ok) */
  addable: number
}

export type BlockingUnit = { partNumber: string; serial: string; problems: string[] }
