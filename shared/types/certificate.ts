// A certificate of conformance as frozen at issue. The renderer reads only this, so the same snapshot and
// template version always give the same document.

export type CertificateStatus = 'valid' | 'superseded' | 'revoked'

export type CertificateInstrument = {
  asset: string
  kind: string
  model: string | null
  serial: string | null
  /** the calibration record in force at the run's start */
  calibrationCertificate: string | null
  laboratory: string | null
  calibratedOn: string | null
  dueAt: string | null
}

export type CertificateCharacteristic = {
  /** display name, e.g. "Output power" */
  label: string
  /** stored parameter name and qualifier (offset in Hz for phase noise) */
  name: string
  qualifier: number
  value: number
  unit: string
  lsl: number | null
  usl: number | null
  rule: 'simple' | 'guarded'
  /** the guard band applied by a guarded rule, in the value's unit */
  guardBand: number | null
  verdict: 'pass' | 'fail'
  step: string
  /** computed by Tercet from other readings (shown to fewer digits) */
  derived: boolean
}

export type CertificateStepAttempts = { step: string; attempts: number; maxAttempts: number | null; disposition: string | null }

export type CertificatePhaseNoisePoint = { offsetHz: number; dBcHz: number }

export type CertificateSnapshot = {
  maker: { name: string; address: string[] }
  number: string
  verifyCode: string
  verifyUrl: string
  issuedAt: string
  issuedBy: { name: string; role: string }
  customer: { name: string; code: string }
  shipment: { code: string; customerPo: string | null }
  product: {
    partNumber: string
    name: string
    multiplication: number
    inputFrequencyHz: number
    outputFrequencyHz: number
  }
  unit: { serial: string; lot: string }
  /** the run whose result the certificate states (the latest final-step run by test time) */
  test: { step: string; startedAt: string; finishedAt: string; station: string; runId: string; temperatureC: number | null }
  specification: { revision: number; approvedAt: string | null }
  attempts: CertificateStepAttempts[]
  instruments: CertificateInstrument[]
  characteristics: CertificateCharacteristic[]
  jitter: { valueS: number; fromHz: number; toHz: number; uslS: number | null; verdict: 'pass' | 'fail' | null } | null
  phaseNoise: {
    measured: CertificatePhaseNoisePoint[]
    /** measured sweep when the station posted one */
    trace: CertificatePhaseNoisePoint[] | null
    mask: CertificatePhaseNoisePoint[]
    /** reference + 20·log10(N), for multipliers whose run carried the reference's phase noise */
    referencePlusN: CertificatePhaseNoisePoint[] | null
  } | null
  /** certificate this one replaces (reissue after a retest or a return) */
  supersedes: string | null
}

/** What the public verification page states: nothing about measured values or the customer. */
export type CertificateVerification = {
  serial: string
  partNumber: string
  number: string
  issuedAt: string
  status: CertificateStatus
  sha256: string | null
  rendered: boolean
}
