// What each unit's certificate states, gathered for many units at once and frozen into the certificate row at issue.
// The run it states is the unit's latest run by test time at the product's last step.
import type { Knex } from 'knex'
import type {
  CertificateCharacteristic, CertificateInstrument, CertificatePhaseNoisePoint, CertificateSnapshot, CertificateStepAttempts,
} from '../../../shared/types/certificate'
import { measurementLabel } from '../../../shared/utils/measurement-display'
import { qualifierKind } from '../../../shared/utils/measurement-names'
import { MASK_MARGIN, maskLine } from '../../../shared/utils/phase-noise-mask'
import { multiplicationPenaltyDb } from '../../../shared/utils/rf'
import {
  dispositionSources, instrumentSources, measurementSources, phaseNoiseLimitSources, retestLimits, runSources, sweepSources, unitSources,
  unitStepSources, type MeasurementSource,
} from '../../database/repositories/certificate-sources'
import { RuleError } from '../rule-error'

/** The part of a snapshot that belongs to the unit; the issuing adds number, code, customer and issuer. */
export type UnitStatement = Pick<CertificateSnapshot, 'product' | 'unit' | 'test' | 'specification' | 'attempts' | 'instruments' | 'characteristics' | 'jitter' | 'phaseNoise'>

const iso = (d: Date | null) => (d == null ? null : new Date(d).toISOString())

function labelOf(m: Pick<MeasurementSource, 'name' | 'qualifier'>): string {
  const kind = qualifierKind(m.name)
  return measurementLabel({ name: m.name, offsetHz: kind === 'offsetHz' ? m.qualifier : undefined, harmonic: kind === 'harmonic' ? m.qualifier : undefined })
}

function characteristic(m: MeasurementSource): CertificateCharacteristic {
  return {
    label: labelOf(m), name: m.name, qualifier: m.qualifier, value: m.value, unit: m.unit, lsl: m.lsl, usl: m.usl,
    rule: m.rule ?? 'simple',
    // a simple rule applies no guard band, whatever width the judgement worked out
    guardBand: m.rule === 'guarded' ? m.guardBand : null,
    verdict: m.verdict === 'fail' ? 'fail' : 'pass', step: m.step, derived: m.derived,
  }
}

/** Statements for the given units, by unit id. A unit without a result at its product's last step cannot be certified. */
export async function unitStatements(db: Knex, unitIds: readonly number[]): Promise<Map<number, UnitStatement>> {
  const units = await unitSources(db, unitIds)
  const missing = unitIds.filter((id) => !units.some((u) => u.id === id))
  if (missing.length) throw new RuleError(422, `No unit with id ${missing.slice(0, 5).join(', ')}.`)

  const steps = await unitStepSources(db, unitIds)
  const stepsOf = new Map<number, Map<string, (typeof steps)[number]>>()
  for (const s of steps) {
    const m = stepsOf.get(s.unitId) ?? new Map()
    m.set(s.step, s)
    stepsOf.set(s.unitId, m)
  }
  const statedRun = new Map<number, number>()
  const noResult: string[] = []
  for (const u of units) {
    const last = u.steps[u.steps.length - 1]!
    const s = stepsOf.get(u.id)?.get(last)
    if (!s) noResult.push(u.serial)
    else statedRun.set(u.id, s.latestRunId)
  }
  if (noResult.length) throw new RuleError(409, `No result at the last test step for ${noResult.length} unit(s): ${noResult.slice(0, 10).join(', ')}.`)

  const latestRuns = steps.map((s) => s.latestRunId)
  const stated = [...statedRun.values()]
  const [runs, measurements, sweeps, instruments, policies, dispositions] = await Promise.all([
    runSources(db, stated),
    measurementSources(db, latestRuns),
    sweepSources(db, stated),
    instrumentSources(db, stated),
    retestLimits(db, [...new Set(units.map((u) => u.productId))]),
    dispositionSources(db, unitIds),
  ])
  const runById = new Map(runs.map((r) => [r.id, r]))
  const limits = await phaseNoiseLimitSources(db, [...new Set(runs.map((r) => r.revisionId).filter((id): id is number => id != null))])

  const measurementsOf = new Map<number, MeasurementSource[]>()
  for (const m of measurements) {
    const list = measurementsOf.get(m.runId)
    if (list) list.push(m)
    else measurementsOf.set(m.runId, [m])
  }
  const instrumentsOf = new Map<number, CertificateInstrument[]>()
  for (const i of instruments) {
    const entry = {
      asset: i.asset, kind: i.kind, model: i.model, serial: i.serial, calibrationCertificate: i.calibrationCertificate,
      laboratory: i.laboratory, calibratedOn: iso(i.calibratedOn), dueAt: iso(i.dueAt),
    }
    const list = instrumentsOf.get(i.runId)
    if (list) list.push(entry)
    else instrumentsOf.set(i.runId, [entry])
  }
  const maxOf = new Map(policies.map((p) => [`${p.productId}\u0000${p.step}`, p.maxAttempts]))
  const dispositionOf = new Map<string, string>()
  for (const d of dispositions) dispositionOf.set(`${d.unitId}\u0000${d.step}`, `${d.kind} at attempt ${d.atAttempts}: ${d.reason}`)

  const out = new Map<number, UnitStatement>()
  for (const u of units) {
    const run = runById.get(statedRun.get(u.id)!)!
    const unitSteps = stepsOf.get(u.id)!
    const attempts: CertificateStepAttempts[] = u.steps.map((step) => ({
      step, attempts: unitSteps.get(step)?.attempts ?? 0, maxAttempts: maxOf.get(`${u.productId}\u0000${step}`) ?? null,
      disposition: dispositionOf.get(`${u.id}\u0000${step}`) ?? null,
    }))

    // key characteristics of every step's latest run, in the product's step order
    const characteristics: CertificateCharacteristic[] = []
    const statedMs = measurementsOf.get(run.id) ?? []
    const spotLimits = limits.filter((l) => l.revisionId === run.revisionId && l.step === run.step)
    for (const step of u.steps) {
      const runId = unitSteps.get(step)?.latestRunId
      if (runId == null) continue
      for (const m of measurementsOf.get(runId) ?? []) {
        if (m.verdict === 'info' || m.name === 'integrated_jitter') continue
        const key = m.key || (m.name === MASK_MARGIN && spotLimits.some((l) => l.key))
        if (key) characteristics.push(characteristic(m))
      }
    }

    const jitterRow = statedMs.find((m) => m.name === 'integrated_jitter')
    const jitter = jitterRow
      ? { valueS: jitterRow.value, fromHz: u.jitterBand[0], toHz: u.jitterBand[1], uslS: jitterRow.usl, verdict: jitterRow.verdict === 'info' ? null : jitterRow.verdict }
      : null

    const measured: CertificatePhaseNoisePoint[] = statedMs.filter((m) => m.name === 'phase_noise')
      .map((m) => ({ offsetHz: m.qualifier, dBcHz: m.value })).sort((a, b) => a.offsetHz - b.offsetHz)
    const sweep = sweeps.get(run.id)
    const trace = sweep?.length ? sweep.map(([offsetHz, dBcHz]) => ({ offsetHz, dBcHz })) : null
    const mask = maskLine(spotLimits.map((l) => ({ offsetHz: l.qualifier, usl: l.usl! }))).map(([offsetHz, dBcHz]) => ({ offsetHz, dBcHz }))
    const refNoise = run.reference?.phaseNoise
    const referencePlusN = u.multiplier > 1 && refNoise?.length
      ? [...refNoise].sort((a, b) => a.offsetHz - b.offsetHz).map((p) => ({ offsetHz: p.offsetHz, dBcHz: p.value + multiplicationPenaltyDb(u.multiplier) }))
      : null
    const phaseNoise = measured.length || trace || mask.length ? { measured, trace, mask, referencePlusN } : null

    out.set(u.id, {
      product: {
        partNumber: u.partNumber, name: u.productName, multiplication: u.multiplier, inputFrequencyHz: u.inputHz,
        outputFrequencyHz: u.multiplier * u.inputHz,
      },
      unit: { serial: u.serial, lot: u.lot },
      test: {
        step: run.step, startedAt: iso(run.startedAt)!, finishedAt: iso(run.finishedAt)!, station: run.station, runId: run.uuid,
        temperatureC: run.temperatureC,
      },
      specification: { revision: run.revision ?? 0, approvedAt: iso(run.revisionApprovedAt) },
      attempts,
      instruments: instrumentsOf.get(run.id) ?? [],
      characteristics,
      jitter,
      phaseNoise,
    })
  }
  return out
}
