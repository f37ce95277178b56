// The RF checks of one stored run as the unit page shows them: the ×N phase-noise excess per offset, the harmonics
// of the input, the output against N × the reference frequency, and why the run is flagged. Pure: from the stored run.
import { measurementLabel } from '../../shared/utils/measurement-display'
import { formatQuantity } from '../../shared/utils/value-format'
import { formatFrequency } from '../../shared/utils/measurement-names'
import { interpolatePhaseNoise, multiplicationCheck, type PhaseNoisePoint } from '../../shared/utils/multiplication-check'
import { implausibleReason } from '../../shared/utils/plausibility'
import { frequencyTolerancePpm, referenceFrequencyCheck } from '../../shared/utils/reference-frequency'
import { multiplicationPenaltyDb } from '../../shared/utils/rf'
import type { HarmonicRow, PhaseNoiseExcessRow, UnitMeasurement, UnitRfChecks } from '../../shared/types/unit-history'

export type ProductFrequencies = { multiplier: number; inputHz: number }
type StoredReference = { frequencyHz?: number; phaseNoise?: PhaseNoisePoint[] }

function readReference(v: unknown): StoredReference | null {
  if (v == null) return null
  const o = (typeof v === 'string' ? JSON.parse(v) : v) as StoredReference
  return o && typeof o === 'object' ? o : null
}


export function unitRfChecks(product: ProductFrequencies, storedReference: unknown, ms: UnitMeasurement[]): UnitRfChecks {
  const reference = readReference(storedReference)
  const penaltyDb = multiplicationPenaltyDb(product.multiplier)
  const spots = ms.filter((m) => m.name === 'phase_noise' && m.offsetHz != null)
  let phaseNoise: PhaseNoiseExcessRow[] = spots.map((m) => ({
    offsetHz: m.offsetHz!, measured: m.value, uncertainty: m.uncertainty, reference: null, expected: null, excessDb: m.excessDb, quieterThanIdeal: false,
  }))
  if (reference?.phaseNoise?.length) {
    try {
      const table = reference.phaseNoise
      const rows = multiplicationCheck(table, product.multiplier, spots.map((m) => ({ offsetHz: m.offsetHz!, value: m.value, uncertainty: m.uncertainty })))
      phaseNoise = rows.map((r, i) => ({
        offsetHz: r.offsetHz, measured: r.measured, uncertainty: spots[i]!.uncertainty,
        reference: interpolatePhaseNoise(table, r.offsetHz), expected: r.ideal, excessDb: r.excessDb, quieterThanIdeal: r.implausible,
      }))
    } catch { /* a reference table the judgement refused is never stored; an unreadable one shows no expectation */ }
  }

  const harmonics: HarmonicRow[] = ms.filter((m) => m.name === 'harmonic_rejection' && m.harmonic != null).map((m) => ({
    harmonic: m.harmonic!, frequencyHz: m.harmonic! * product.inputHz, rejectionDb: m.value, uncertainty: m.uncertainty,
    lsl: m.limit?.lsl ?? null, usl: m.limit?.usl ?? null, verdict: m.verdict, zone: m.zone, implausible: m.implausible,
  })).sort((a, b) => a.harmonic - b.harmonic)

  const output = ms.find((m) => m.name === 'output_frequency')
  const ppmLimit = ms.find((m) => m.name === 'frequency_error')?.limit
  const referenceFrequency = output && reference?.frequencyHz != null && reference.frequencyHz > 0
    ? referenceFrequencyCheck(output.value, reference.frequencyHz, product.multiplier, frequencyTolerancePpm(ppmLimit), output.uncertainty)
    : null

  const issues: string[] = []
  for (const r of phaseNoise) {
    if (r.quieterThanIdeal) issues.push(`Phase noise at ${formatFrequency(r.offsetHz)} is ${formatQuantity(-r.excessDb!, 'dB')} quieter than an ideal ×${product.multiplier} of the reference allows.`)
  }
  if (referenceFrequency?.agrees === false) {
    issues.push(`The output is ${formatQuantity(referenceFrequency.offsetPpm, 'ppm')} from ${product.multiplier} × the reference frequency; the specification allows ${formatQuantity(referenceFrequency.tolerancePpm, 'ppm')}.`)
  }
  for (const m of ms) {
    if (!m.implausible) continue
    const why = implausibleReason(m.name, m.value, m.limit)
    issues.push(`${measurementLabel(m)}: ${why ?? 'derived from a phase-noise trace with implausible levels'}.`)
  }
  return { multiplier: product.multiplier, penaltyDb, referencePosted: !!reference?.phaseNoise?.length, phaseNoise, harmonics, referenceFrequency, issues }
}
