// What the customer portal's routes answer with (server/services/portal/), read by the portal pages.
import type { CertificateStatus } from './certificate'

/** One shipped unit found by the serial search. */
export type PortalUnitHit = {
  partNumber: string
  productName: string
  serial: string
  lot: string
  /** the shipment the unit went out in most recently (of this customer, for a customer) */
  shipment: { id: number; code: string; customer: string }
  /** the unit came back from that shipment */
  returned: boolean
}

export type PortalUnitSearch = { q: string; units: PortalUnitHit[]; total: number; page: number; pageSize: number }

/** One measured value of the latest run at a step, with the limits it was judged against. */
export type PortalValue = {
  name: string
  /** display name with its offset or harmonic, e.g. "Phase noise @ 10 kHz" */
  label: string
  /** offset in Hz or harmonic number; null when the parameter has none */
  qualifier: number | null
  value: number
  unit: string
  lsl: number | null
  usl: number | null
  verdict: 'pass' | 'fail' | 'info'
  /** a key characteristic of the product's specification */
  key: boolean
}

export type PortalStepResult = {
  step: string
  attempt: number
  /** test start, ISO */
  testedAt: string
  verdict: 'pass' | 'fail'
  specRevision: number | null
  temperatureC: number | null
  values: PortalValue[]
}

export type PortalPhaseNoise = {
  step: string
  spots: { offsetHz: number; value: number }[]
  /** the measured sweep, when the station posted one */
  trace: [number, number][]
  /** spot limits; drawn with maskLine */
  mask: { offsetHz: number; usl: number }[]
  /** the reference's phase noise raised by 20·log10(N): the floor an ideal ×N multiplier of it reaches */
  referencePlusN: [number, number][]
  multiplier: number
  /** 20·log10(N), dB */
  penaltyDb: number
}

export type PortalCertificate = {
  number: string
  status: CertificateStatus
  issuedAt: string
  shipmentCode: string
  /** the document exists and can be downloaded now */
  rendered: boolean
  verifyCode: string
  statusChangedAt: string | null
  statusReason: string | null
  supersedes: string | null
}

export type PortalHistoryEvent = {
  at: string
  kind: 'issued' | 'superseded' | 'revoked' | 'returned'
  /** certificate number, or the return's number */
  reference: string
  note: string | null
}

export type PortalUnitView = {
  unit: {
    partNumber: string; productName: string; serial: string; lot: string
    multiplier: number; inputHz: number; outputHz: number
  }
  shipments: { id: number; code: string; customer: string; status: string; releasedAt: string | null; dispatchedAt: string | null; returnedAt: string | null }[]
  /** the latest run at each step of the product, in the product's step order */
  steps: PortalStepResult[]
  phaseNoise: PortalPhaseNoise | null
  certificates: PortalCertificate[]
  /** newest first */
  history: PortalHistoryEvent[]
}
