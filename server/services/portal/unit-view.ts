// The per-serial view of the customer portal: the latest result at each step, the phase-noise picture and the unit's
// certificates with their history, all within the caller's scope.
import type { Knex } from 'knex'
import { keyCharacteristics, latestRunIds, unitCertificates, unitReturns, visibleUnit, type Scope } from '../../database/repositories/portal'
import { loadRunsWithMeasurements } from '../../database/repositories/runs'
import { phaseNoiseMasksOf } from '../../database/repositories/units'
import { measurementLabel } from '../../../shared/utils/measurement-display'
import { limitMaskFromMeasurements } from '../../../shared/utils/phase-noise-plot'
import { multiplicationPenaltyDb } from '../../../shared/utils/rf'
import type { PortalHistoryEvent, PortalPhaseNoise, PortalStepResult, PortalUnitView } from '../../../shared/types/portal'

const iso = (d: Date | string | null) => (d == null ? null : new Date(d).toISOString())

function parsed<T>(v: unknown): T | null {
  if (v == null) return null
  return (typeof v === 'string' ? JSON.parse(v) : v) as T
}

/**
 * A customer whose every shipment of the unit has come back sees the unit as it was when it left them: runs that
 * started after its last return belong to whoever has it now. Staff, and a customer holding it, see every run.
 */
function runsUntil(scope: Scope, shipments: { returnedAt: Date | null }[]): Date | null {
  if (scope === null || shipments.some((s) => s.returnedAt == null)) return null
  return new Date(Math.max(...shipments.map((s) => new Date(s.returnedAt!).getTime())))
}

export async function portalUnitView(db: Knex, scope: Scope, partNumber: string, serial: string): Promise<PortalUnitView | null> {
  const found = await visibleUnit(db, partNumber, serial, scope)
  if (!found) return null
  const { unit, shipments } = found
  const loaded = await loadRunsWithMeasurements(db, await latestRunIds(db, unit.id, runsUntil(scope, shipments)))
  const revisionIds = [...new Set(loaded.map(({ run }) => Number(run.revision_id)).filter((id) => id > 0))]
  const [keys, masks, certificates, returns] = await Promise.all([
    keyCharacteristics(db, revisionIds), phaseNoiseMasksOf(db, revisionIds),
    unitCertificates(db, unit.id, scope), unitReturns(db, unit.id, scope),
  ])
  const order = (step: string) => { const i = unit.steps.indexOf(step); return i < 0 ? unit.steps.length : i }
  loaded.sort((a, b) => order(a.run.step) - order(b.run.step) || a.run.step.localeCompare(b.run.step))

  const steps: PortalStepResult[] = loaded.map(({ run, measurements }) => {
    const values = measurements.map((m: any) => {
      const qualifier = m.name === 'phase_noise' || m.name === 'harmonic_rejection' ? Number(m.qualifier) : null
      return {
        name: m.name as string,
        label: measurementLabel({ name: m.name, offsetHz: m.name === 'phase_noise' ? qualifier ?? undefined : undefined, harmonic: m.name === 'harmonic_rejection' ? qualifier ?? undefined : undefined }),
        qualifier, value: Number(m.value), unit: m.unit as string, lsl: m.lsl ?? null, usl: m.usl ?? null, verdict: m.verdict,
        key: keys.has(`${run.revision_id}|${run.step}|${m.name}|${Number(m.qualifier)}`),
      }
    })
    // key characteristics first, otherwise as the station reported them
    values.sort((a: { key: boolean }, b: { key: boolean }) => Number(b.key) - Number(a.key))
    return {
      step: run.step, attempt: Number(run.attempt), testedAt: iso(run.started_at)!, verdict: run.server_verdict,
      specRevision: run.revision_number ?? null, temperatureC: run.temperature_c ?? null, values,
    }
  })

  return {
    unit: { partNumber: unit.partNumber, productName: unit.productName, serial: unit.serial, lot: unit.lot, multiplier: unit.multiplier, inputHz: unit.inputHz, outputHz: unit.outputHz },
    shipments: shipments.map((s) => ({ id: s.shipmentId, code: s.code, customer: s.customer, status: s.status, releasedAt: iso(s.releasedAt), dispatchedAt: iso(s.dispatchedAt), returnedAt: iso(s.returnedAt) })),
    steps,
    phaseNoise: phaseNoiseOf(loaded, masks, unit.multiplier),
    certificates: certificates.map((c) => ({
      number: c.number, status: c.status, issuedAt: iso(c.issuedAt)!, shipmentCode: c.shipmentCode, rendered: c.rendered,
      verifyCode: c.verifyCode, statusChangedAt: iso(c.statusChangedAt), statusReason: c.statusReason, supersedes: c.supersedes,
    })),
    history: historyOf(certificates, returns),
  }
}

type Loaded = Awaited<ReturnType<typeof loadRunsWithMeasurements>>

/** The phase noise of the last step (in product order) whose latest run measured it. */
function phaseNoiseOf(loaded: Loaded, masks: Map<string, { offsetHz: number; usl: number }[]>, multiplier: number): PortalPhaseNoise | null {
  const hit = [...loaded].reverse().find(({ measurements }) => measurements.some((m: any) => m.name === 'phase_noise'))
  if (!hit) return null
  const { run, measurements, traces } = hit
  const spotRows = measurements.filter((m: any) => m.name === 'phase_noise')
  const spots = spotRows.map((m: any) => ({ offsetHz: Number(m.qualifier), value: Number(m.value) })).sort((a, b) => a.offsetHz - b.offsetHz)
  const mask = masks.get(`${run.revision_id}\u0000${run.step}`)
    ?? limitMaskFromMeasurements(spotRows.map((m: any) => ({ name: m.name, offsetHz: Number(m.qualifier), limit: { usl: m.usl } })))
  const sweep = traces.find((t: any) => t.name === 'phase_noise_sweep')
  const penaltyDb = multiplicationPenaltyDb(multiplier)
  const reference = parsed<{ phaseNoise?: { offsetHz: number; value: number }[] }>(run.reference)
  const referencePlusN: [number, number][] = multiplier > 1 && reference?.phaseNoise?.length
    ? [...reference.phaseNoise].sort((a, b) => a.offsetHz - b.offsetHz).map((p) => [p.offsetHz, p.value + penaltyDb])
    : []
  return { step: run.step, spots, trace: parsed<[number, number][]>(sweep?.points) ?? [], mask, referencePlusN, multiplier, penaltyDb }
}

function historyOf(certificates: Awaited<ReturnType<typeof unitCertificates>>, returns: Awaited<ReturnType<typeof unitReturns>>): PortalHistoryEvent[] {
  const events: PortalHistoryEvent[] = []
  for (const c of certificates) {
    events.push({ at: iso(c.issuedAt)!, kind: 'issued', reference: c.number, note: c.supersedes ? `replaces ${c.supersedes}` : `shipment ${c.shipmentCode}` })
    if (c.status !== 'valid' && c.statusChangedAt) events.push({ at: iso(c.statusChangedAt)!, kind: c.status, reference: c.number, note: c.statusReason })
  }
  for (const r of returns) events.push({ at: iso(r.receivedAt)!, kind: 'returned', reference: r.returnNumber, note: `from shipment ${r.shipmentCode}` })
  return events.sort((a, b) => b.at.localeCompare(a.at))
}
