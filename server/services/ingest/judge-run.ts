// Pure judgement of one posted run against the revision in force: no database, no clock.
import { judge, hasLimit } from '../../../shared/utils/decision'
import { rmsJitterSeconds, type PhaseNoisePointTuple } from '../../../shared/utils/jitter'
import { expectedUnit, qualifierKey } from '../../../shared/utils/measurement-names'
import { multiplicationCheck } from '../../../shared/utils/multiplication-check'
import { maskMarginLimit, traceMaskMargin } from '../../../shared/utils/phase-noise-mask'
import { impossibleValues, implausibleReason, implausibleTrace } from '../../../shared/utils/plausibility'
import { frequencyTolerancePpm, referenceFrequencyCheck } from '../../../shared/utils/reference-frequency'
import { ppmError } from '../../../shared/utils/rf'
import type { ProductInfo, RevisionInForce, SpecLimit } from '../../database/repositories/spec-lookup'
import type { StationRun } from '../../utils/run-validator'
import type { FieldError } from '../../../shared/types/problem'
import { RuleError } from '../rule-error'
import type { AppliedLimit, JudgedMeasurement, RunJudgement } from '../../../shared/types/judgement'

export type { AppliedLimit, JudgedMeasurement, RunJudgement }

/** A station run refused by the rules (422); the ingest paths also answer it per run in a batch. */
export class RunRejected extends RuleError {
  constructor(message: string, errors: FieldError[] = []) { super(422, message, errors) }
}

const key = (name: string, q: number) => `${name}@${q}`

type Unjudged = Omit<JudgedMeasurement, 'limit' | 'verdict' | 'zone' | 'outOfSpec' | 'implausible' | 'atOffsetHz'> & { atOffsetHz?: number | null }

// Every judged measurement is built with the same fields in the same order: one object shape for the hot path.
function judged(m: Unjudged, limit: AppliedLimit | null, verdict: JudgedMeasurement['verdict'], zone: JudgedMeasurement['zone'], outOfSpec: boolean): JudgedMeasurement {
  return {
    name: m.name, qualifier: m.qualifier, value: m.value, unit: m.unit, uncertainty: m.uncertainty,
    limit, verdict, zone, derived: m.derived, excessDb: m.excessDb, outOfSpec,
    implausible: implausibleReason(m.name, m.value, limit) !== null, atOffsetHz: m.atOffsetHz ?? null,
  }
}

function applyLimit(m: Unjudged, limit: SpecLimit | undefined): JudgedMeasurement {
  if (!limit || !hasLimit(limit)) return judged(m, null, 'info', null, false)
  const j = judge(m.value, { lsl: limit.lsl, usl: limit.usl, rule: limit.rule, defaultUncertainty: limit.defaultUncertainty }, m.uncertainty)
  const outOfSpec = (limit.lsl != null && m.value < limit.lsl) || (limit.usl != null && m.value > limit.usl) || !Number.isFinite(m.value)
  return judged(m, { lsl: limit.lsl, usl: limit.usl, target: limit.target, rule: limit.rule, guardBand: j.guardBand }, j.verdict, j.zone, outOfSpec)
}

function jitterPoints(run: StationRun, posted: JudgedMeasurement[]): PhaseNoisePointTuple[] {
  const sweep = run.traces?.find((t) => t.name === 'phase_noise_sweep')
  if (sweep && sweep.points.length >= 2) return sweep.points.map(([f, l]) => [f, l] as const)
  return posted.filter((m) => m.name === 'phase_noise').map((m) => [m.qualifier, m.value] as const)
}

/** Judges every measurement, adds the derived ones, and finds what the spec requires but the run lacks. */
export function judgeRun(run: StationRun, product: ProductInfo, revision: RevisionInForce | undefined): RunJudgement {
  if (!product.steps.includes(run.step)) {
    throw new RunRejected(`Step "${run.step}" is not a test step of ${product.partNumber} (${product.steps.join(', ')}).`, [{ pointer: '/step', message: 'unknown step for this part' }])
  }
  // values no instrument produces are refused before anything reads them
  const impossible = impossibleValues(run, product.outputHz)
  if (impossible.length) throw new RunRejected('Some values cannot come from a measurement.', impossible)

  const limits = new Map<string, SpecLimit>()
  for (const l of revision?.limits ?? []) if (l.step === run.step) limits.set(key(l.name, l.qualifier), l)

  const errors: { pointer: string; message: string }[] = []
  const seen = new Set<string>()
  const base: Unjudged[] = []
  run.measurements.forEach((m, i) => {
    const q = qualifierKey(m.name, { offsetHz: m.offsetHz, harmonic: m.harmonic }) ?? 0
    const k = key(m.name, q)
    const unit = expectedUnit(m.name) ?? limits.get(k)?.unit
    if (unit && unit !== m.unit) errors.push({ pointer: `/measurements/${i}/unit`, message: `${m.name} is specified in ${unit}, not ${m.unit}` })
    if (seen.has(k)) errors.push({ pointer: `/measurements/${i}`, message: `${m.name} appears twice with the same qualifier` })
    seen.add(k)
    base.push({ name: m.name, qualifier: q, value: m.value, unit: m.unit, uncertainty: m.uncertainty ?? null, derived: false, excessDb: null })
  })
  if (errors.length) throw new RunRejected('Some measurements do not match the specification.', errors)

  let measurementIssue = false
  if (run.reference?.phaseNoise?.length) {
    const pn = base.filter((m) => m.name === 'phase_noise')
    let rows
    try {
      rows = multiplicationCheck(run.reference.phaseNoise, product.multiplier, pn.map((m) => ({ offsetHz: m.qualifier, value: m.value, uncertainty: m.uncertainty })))
    } catch (e) {
      throw new RunRejected('The reference phase noise cannot be used.', [{ pointer: '/reference/phaseNoise', message: (e as Error).message }])
    }
    rows.forEach((r, i) => {
      pn[i]!.excessDb = r.excessDb
      if (r.implausible) measurementIssue = true
    })
  }

  const judged = base.map((m) => applyLimit(m, limits.get(key(m.name, m.qualifier))))
  const derived: JudgedMeasurement[] = []
  const freq = judged.find((m) => m.name === 'output_frequency')
  if (freq && !seen.has(key('frequency_error', 0))) {
    const u = freq.uncertainty != null ? (freq.uncertainty / product.outputHz) * 1e6 : null
    // judged against the nominal output: the frequency the customer buys
    derived.push(applyLimit({ name: 'frequency_error', qualifier: 0, value: ppmError(freq.value, product.outputHz), unit: 'ppm', uncertainty: u, derived: true, excessDb: null }, limits.get(key('frequency_error', 0))))
  }
  if (freq && run.reference) {
    // the output must follow N × the reference the station measured; disagreement beyond the spec's tolerance is the bench's
    const c = referenceFrequencyCheck(freq.value, run.reference.frequencyHz, product.multiplier, frequencyTolerancePpm(limits.get(key('frequency_error', 0))), freq.uncertainty)
    if (c.agrees === false) measurementIssue = true
  }
  const sweep = run.traces?.find((t) => t.name === 'phase_noise_sweep')
  // what is derived from implausible levels is not trusted either
  const sweepImplausible = !!sweep && implausibleTrace(sweep.points)
  const jitterInputsImplausible = sweep && sweep.points.length >= 2 ? sweepImplausible : judged.some((m) => m.name === 'phase_noise' && m.implausible)
  const points = jitterPoints(run, judged)
  if (points.length >= 2 && !seen.has(key('integrated_jitter', 0))) {
    try {
      const j = rmsJitterSeconds(points, product.jitterBand[0], product.jitterBand[1], product.outputHz)
      if (j.complete) {
        const m = applyLimit({ name: 'integrated_jitter', qualifier: 0, value: j.jitterS, unit: 's', uncertainty: null, derived: true, excessDb: null }, limits.get(key('integrated_jitter', 0)))
        if (jitterInputsImplausible) m.implausible = true
        derived.push(m)
      }
    } catch { /* the points do not cover the band: no jitter is derived */ }
  }
  const marginLimit = limits.get(key('phase_noise_mask_margin', 0)) ?? maskMarginLimit([...limits.values()], run.step)
  if (sweep && marginLimit && !seen.has(key('phase_noise_mask_margin', 0))) {
    const mask = [...limits.values()].filter((l) => l.name === 'phase_noise' && l.usl != null).map((l) => ({ offsetHz: l.qualifier, usl: l.usl! }))
    const margin = traceMaskMargin(mask, sweep.points)
    if (margin) {
      const m = applyLimit({
        name: 'phase_noise_mask_margin', qualifier: 0, value: margin.worstMarginDb, unit: 'dB', uncertainty: null, derived: true, excessDb: null, atOffsetHz: margin.worstOffsetHz,
      }, marginLimit)
      if (sweepImplausible) m.implausible = true
      derived.push(m)
    }
  }

  const all = [...judged, ...derived]
  if (sweepImplausible || all.some((m) => m.implausible)) measurementIssue = true
  const present = new Set(all.map((m) => key(m.name, m.qualifier)))
  const missingRequired = [...limits.values()].filter((l) => l.required && !present.has(key(l.name, l.qualifier))).map((l) => ({ name: l.name, qualifier: l.qualifier }))
  const verdict = missingRequired.length || all.some((m) => m.verdict === 'fail') ? 'fail' : 'pass'
  return { measurements: all, verdict, missingRequired, measurementIssue }
}
