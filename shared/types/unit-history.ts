import type { RunInstrumentView } from './calibration'
// What GET /api/units/:serial answers with: built by server/services/unit-history.ts, read by the unit page.
import type { ReferenceFrequencyCheck } from '../utils/reference-frequency'

export type UnitMeasurement = {
  name: string; offsetHz?: number; harmonic?: number; value: number; unit: string; uncertainty: number | null
  limit: { lsl: number | null; usl: number | null; target: number | null; rule: 'simple' | 'guarded'; guardBand: number } | null
  verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null; derived: boolean; excessDb: number | null
  /** a value no working bench produces: kept out of capability and charts */
  implausible: boolean
  /** where along the phase-noise sweep a derived value was found (the mask margin's worst offset) */
  atOffsetHz?: number
}

/** One spot offset of the ×N check: measured against the reference raised by 20·log10(N). */
export type PhaseNoiseExcessRow = {
  offsetHz: number
  /** dBc/Hz as posted */
  measured: number
  uncertainty: number | null
  /** the reference at this offset (straight lines between its points on a log-frequency axis); null outside them */
  reference: number | null
  /** reference + 20·log10(N): what an ideal multiplier of this reference gives */
  expected: number | null
  /** measured − expected, dB */
  excessDb: number | null
  /** quieter than an ideal multiplier of the reference allows, beyond the result's uncertainty: a bench problem */
  quieterThanIdeal: boolean
}

/** One harmonic of the input the specification names (harmonic k lies at k × the input frequency). */
export type HarmonicRow = {
  harmonic: number
  frequencyHz: number
  rejectionDb: number
  uncertainty: number | null
  lsl: number | null
  usl: number | null
  verdict: 'pass' | 'fail' | 'info'
  zone: 'inside' | 'guard' | 'outside' | null
  implausible: boolean
}

export type UnitRfChecks = {
  multiplier: number
  /** 20·log10(N), dB */
  penaltyDb: number
  /** whether the station posted a reference phase-noise table */
  referencePosted: boolean
  phaseNoise: PhaseNoiseExcessRow[]
  harmonics: HarmonicRow[]
  /** output frequency against N × the reference frequency the station measured; null without both */
  referenceFrequency: ReferenceFrequencyCheck | null
  /** why the run is flagged as a measurement problem, in words */
  issues: string[]
}

export type UnitRun = {
  id: string; step: string; attempt: number; station: string; startedAt: string; finishedAt: string; receivedAt: string
  verdict: 'pass' | 'fail'; stationVerdict: 'pass' | 'fail' | null; verdictDisagrees: boolean
  incomplete: boolean; missingRequired: { name: string; offsetHz?: number; harmonic?: number }[]
  calibrationLapsed: boolean; measurementIssue: boolean; revision: number | null
  /** when the revision the run was judged by was approved: the source of its limits */
  revisionApprovedAt: string | null
  measurements: UnitMeasurement[]
  traces: { name: string; points: [number, number][] }[]
  /** the phase-noise spot limits the run was held to */
  phaseNoiseMask: { offsetHz: number; usl: number }[]
  rf: UnitRfChecks
  /** the instruments the run recorded and the calibration record in force for each at its test time */
  instruments: RunInstrumentView[]
}

export type UnitInfo = {
  serial: string; partNumber: string; productName: string; lot: string; createdAt: string
  multiplier: number; inputHz: number; outputHz: number
}

/** unit is null only in the placeholder shown before the first answer. */
export type UnitHistoryReply = { unit: UnitInfo | null; runs: UnitRun[] }
