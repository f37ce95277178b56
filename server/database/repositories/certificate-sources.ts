// What a certificate states, read in batches for many units at once (issuing a shipment of thousands of units inside
// one transaction): every read takes a list of ids, chunked, and none runs per unit.
import type { Knex } from 'knex'

const CHUNK = 1000

async function chunked<T>(ids: readonly number[], read: (part: number[]) => Promise<T[]>): Promise<T[]> {
  const unique = [...new Set(ids)]
  const out: T[] = []
  for (let i = 0; i < unique.length; i += CHUNK) out.push(...(await read(unique.slice(i, i + CHUNK))))
  return out
}

const json = <T>(v: unknown): T => (typeof v === 'string' ? JSON.parse(v) : v) as T

export type ShipmentSource = { id: number; code: string; customerPo: string | null; customerId: number; customerCode: string; customerName: string }

export async function shipmentSource(db: Knex, shipmentId: number): Promise<ShipmentSource | undefined> {
  const r = await db('shipments as s').join('customers as c', 'c.id', 's.customer_id').where('s.id', shipmentId)
    .first('s.id', 's.code', 's.customer_po', 's.customer_id', 'c.code as customer_code', 'c.name as customer_name')
  return r ? { id: r.id, code: r.code, customerPo: r.customer_po ?? null, customerId: r.customer_id, customerCode: r.customer_code, customerName: r.customer_name } : undefined
}

export async function issuerSource(db: Knex, userId: number): Promise<{ name: string; role: string } | undefined> {
  const r = await db('users').where({ id: userId }).first('name', 'role')
  return r ? { name: r.name, role: r.role } : undefined
}

export type UnitSource = {
  id: number; serial: string; lot: string; productId: number; partNumber: string; productName: string
  multiplier: number; inputHz: number; outputHz: number; steps: string[]; jitterBand: [number, number]
}

export async function unitSources(db: Knex, unitIds: readonly number[]): Promise<UnitSource[]> {
  return chunked(unitIds, async (part) => {
    const rows = await db('units as u').join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
      .whereIn('u.id', part)
      .select('u.id', 'u.serial', 'l.code as lot', 'p.id as product_id', 'p.part_number', 'p.name', 'p.multiplier', 'p.input_hz', 'p.output_hz',
        'p.steps', 'p.jitter_band_lo_hz', 'p.jitter_band_hi_hz')
    return rows.map((r: any) => ({
      id: r.id, serial: r.serial, lot: r.lot, productId: r.product_id, partNumber: r.part_number, productName: r.name,
      multiplier: Number(r.multiplier), inputHz: Number(r.input_hz), outputHz: Number(r.output_hz), steps: json<string[]>(r.steps),
      jitterBand: [Number(r.jitter_band_lo_hz), Number(r.jitter_band_hi_hz)] as [number, number],
    }))
  })
}

export type UnitStepSource = { unitId: number; step: string; attempts: number; latestRunId: number; latestVerdict: 'pass' | 'fail' }

export async function unitStepSources(db: Knex, unitIds: readonly number[]): Promise<UnitStepSource[]> {
  return chunked(unitIds, async (part) => {
    const rows = await db('unit_steps').whereIn('unit_id', part).select('unit_id', 'step', 'attempts', 'latest_run_id', 'latest_verdict')
    return rows.map((r: any) => ({ unitId: r.unit_id, step: r.step, attempts: r.attempts, latestRunId: Number(r.latest_run_id), latestVerdict: r.latest_verdict }))
  })
}

export type RunSource = {
  id: number; uuid: string; unitId: number; step: string; startedAt: Date; finishedAt: Date; temperatureC: number | null
  station: string; revisionId: number | null; revision: number | null; revisionApprovedAt: Date | null
  reference: { frequencyHz: number; phaseNoise?: { offsetHz: number; value: number }[] } | null
}

export async function runSources(db: Knex, runIds: readonly number[]): Promise<RunSource[]> {
  return chunked(runIds, async (part) => {
    const rows = await db('test_runs as r').join('stations as s', 's.id', 'r.station_id').leftJoin('spec_revisions as sr', 'sr.id', 'r.revision_id')
      .whereIn('r.id', part)
      .select('r.id', 'r.uuid', 'r.unit_id', 'r.step', 'r.started_at', 'r.finished_at', 'r.temperature_c', 's.name as station',
        'r.revision_id', 'sr.revision', 'sr.approved_at', 'r.reference')
    return rows.map((r: any) => ({
      id: Number(r.id), uuid: r.uuid, unitId: r.unit_id, step: r.step, startedAt: r.started_at, finishedAt: r.finished_at,
      temperatureC: r.temperature_c ?? null, station: r.station, revisionId: r.revision_id ?? null, revision: r.revision ?? null,
      revisionApprovedAt: r.approved_at ?? null, reference: r.reference == null ? null : json(r.reference),
    }))
  })
}

export type MeasurementSource = {
  runId: number; step: string; name: string; qualifier: number; value: number; unit: string
  lsl: number | null; usl: number | null; rule: 'simple' | 'guarded' | null; guardBand: number | null
  verdict: 'pass' | 'fail' | 'info'; key: boolean; derived: boolean
}

// The measurements a certificate states: the key characteristics of the revision each run was judged by, and the
// phase-noise spots, jitter and mask margin of the stated run (the judgement's own limit snapshot on each row).
const STATED_NAMES = ['phase_noise', 'integrated_jitter', 'phase_noise_mask_margin']

export async function measurementSources(db: Knex, runIds: readonly number[]): Promise<MeasurementSource[]> {
  return chunked(runIds, async (part) => {
    const rows = await db('measurements as m')
      .leftJoin('spec_limits as sl', function () {
        this.on('sl.revision_id', 'm.revision_id').andOn('sl.step', 'm.step').andOn('sl.name', 'm.name').andOn('sl.qualifier', 'm.qualifier')
      })
      .whereIn('m.run_id', part)
      .where((q) => q.where('sl.key_characteristic', 1).orWhereIn('m.name', STATED_NAMES))
      .orderBy('m.id')
      .select('m.run_id', 'm.step', 'm.name', 'm.qualifier', 'm.value', 'm.unit', 'm.lsl', 'm.usl', 'm.rule', 'm.guard_band', 'm.verdict', 'm.derived', 'sl.key_characteristic')
    return rows.map((r: any) => ({
      runId: Number(r.run_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), value: Number(r.value), unit: r.unit,
      lsl: r.lsl ?? null, usl: r.usl ?? null, rule: r.rule ?? null, guardBand: r.guard_band ?? null, verdict: r.verdict, key: !!r.key_characteristic, derived: !!r.derived,
    }))
  })
}

export type LimitSource = { revisionId: number; step: string; name: string; qualifier: number; usl: number | null; rule: 'simple' | 'guarded'; defaultUncertainty: number | null; key: boolean }

export async function phaseNoiseLimitSources(db: Knex, revisionIds: readonly number[]): Promise<LimitSource[]> {
  return chunked(revisionIds, async (part) => {
    const rows = await db('spec_limits').whereIn('revision_id', part).where('name', 'phase_noise').whereNotNull('usl')
      .select('revision_id', 'step', 'name', 'qualifier', 'usl', 'rule', 'default_uncertainty', 'key_characteristic')
    return rows.map((r: any) => ({
      revisionId: r.revision_id, step: r.step, name: r.name, qualifier: Number(r.qualifier), usl: r.usl, rule: r.rule,
      defaultUncertainty: r.default_uncertainty ?? null, key: !!r.key_characteristic,
    }))
  })
}

export async function sweepSources(db: Knex, runIds: readonly number[]): Promise<Map<number, [number, number][]>> {
  const rows = await chunked(runIds, (part) => db('traces').whereIn('run_id', part).where('name', 'phase_noise_sweep').orderBy('id').select('run_id', 'points'))
  const out = new Map<number, [number, number][]>()
  for (const r of rows as any[]) out.set(Number(r.run_id), json(r.points))
  return out
}

export type InstrumentSource = {
  runId: number; asset: string; kind: string; model: string | null; serial: string | null
  calibrationCertificate: string | null; laboratory: string | null; calibratedOn: Date | null; dueAt: Date | null
}

/** The instruments linked to each run, with the calibration record that was in force at its start. */
export async function instrumentSources(db: Knex, runIds: readonly number[]): Promise<InstrumentSource[]> {
  return chunked(runIds, async (part) => {
    const rows = await db('run_instruments as ri').join('instruments as i', 'i.id', 'ri.instrument_id')
      .leftJoin('calibration_records as c', 'c.id', 'ri.calibration_id')
      .whereIn('ri.run_id', part).orderBy('i.asset_number')
      .select('ri.run_id', 'i.asset_number', 'i.kind', 'i.model', 'i.serial', 'c.certificate_number', 'c.laboratory', 'c.calibrated_on', 'c.due_at')
    return rows.map((r: any) => ({
      runId: Number(r.run_id), asset: r.asset_number, kind: r.kind, model: r.model ?? null, serial: r.serial ?? null,
      calibrationCertificate: r.certificate_number ?? null, laboratory: r.laboratory ?? null, calibratedOn: r.calibrated_on ?? null, dueAt: r.due_at ?? null,
    }))
  })
}

export async function retestLimits(db: Knex, productIds: readonly number[]): Promise<{ productId: number; step: string; maxAttempts: number }[]> {
  return chunked(productIds, async (part) => (await db('retest_policies').whereIn('product_id', part).select('product_id', 'step', 'max_attempts'))
    .map((r: any) => ({ productId: r.product_id, step: r.step, maxAttempts: r.max_attempts })))
}

export type DispositionSource = { unitId: number; step: string; kind: string; reason: string; atAttempts: number }

/** Every disposition of the units, oldest first (the caller keeps the latest per step). */
export async function dispositionSources(db: Knex, unitIds: readonly number[]): Promise<DispositionSource[]> {
  return chunked(unitIds, async (part) => (await db('unit_dispositions').whereIn('unit_id', part).orderBy('decided_at').orderBy('id')
    .select('unit_id', 'step', 'kind', 'reason', 'at_attempts'))
    .map((r: any) => ({ unitId: r.unit_id, step: r.step, kind: r.kind, reason: r.reason, atAttempts: r.at_attempts })))
}
