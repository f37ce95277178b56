import type { Knex } from 'knex'
import type { UnitStepRow } from '../../../shared/types/lot-readiness'

export type LotStatus = 'open' | 'on_hold' | 'released' | 'shipped'

export type LotRow = {
  id: number; code: string; productId: number; status: LotStatus; plannedQty: number | null; holdReason: string | null
  createdAt: Date; releasedAt: Date | null; releasedBy: { id: number; name: string } | null; shippedAt: Date | null
  engineering: boolean; engineeringSource: 'pattern' | 'hand' | null
}

function toLot(r: any): LotRow {
  return {
    id: r.id, code: r.code, productId: r.product_id, status: r.status, plannedQty: r.planned_qty ?? null, holdReason: r.hold_reason ?? null,
    createdAt: r.created_at, releasedAt: r.released_at ?? null, releasedBy: r.released_by ? { id: r.released_by, name: r.released_by_name ?? '' } : null,
    shippedAt: r.shipped_at ?? null, engineering: !!r.engineering, engineeringSource: r.engineering_source ?? null,
  }
}

export async function findLotByCode(db: Knex, code: string): Promise<LotRow | undefined> {
  const r = await db('lots as l').leftJoin('users as u', 'u.id', 'l.released_by').where('l.code', code).first('l.*', 'u.name as released_by_name')
  return r ? toLot(r) : undefined
}

export async function lockLotByCode(trx: Knex, code: string): Promise<LotRow | undefined> {
  const r = await trx('lots').where({ code }).forUpdate().first()
  return r ? toLot(r) : undefined
}

export async function updateLotStatus(trx: Knex, id: number, change: { status: LotStatus; holdReason?: string | null; releasedAt?: Date | null; releasedBy?: number | null; shippedAt?: Date | null }): Promise<void> {
  const row: Record<string, unknown> = { status: change.status }
  if (change.holdReason !== undefined) row.hold_reason = change.holdReason
  if (change.releasedAt !== undefined) row.released_at = change.releasedAt
  if (change.releasedBy !== undefined) row.released_by = change.releasedBy
  if (change.shippedAt !== undefined) row.shipped_at = change.shippedAt
  await trx('lots').where({ id }).update(row)
}

/** Marks a lot engineering or production by hand (the caller holds its lock and writes the audit row). */
export async function updateLotKind(trx: Knex, id: number, engineering: boolean): Promise<void> {
  await trx('lots').where({ id }).update({ engineering, engineering_source: 'hand' })
}

/**
 * Each unit of the lot with its latest result per step tested, for the release check. With `notReadyOnly`, only the
 * units the release check would hold back (`ready` kept on the unit's row by the write path), read through the
 * (lot_id, ready, serial) index: what lotReadiness needs to name their problems.
 */
export async function unitStepsOfLot(db: Knex, lotId: number, { notReadyOnly = false } = {}): Promise<UnitStepRow[]> {
  const q = db('units as u').leftJoin('unit_steps as us', 'us.unit_id', 'u.id').leftJoin('test_runs as r', 'r.id', 'us.latest_run_id')
    .where('u.lot_id', lotId).select('u.serial', 'us.step', 'us.latest_verdict', 'r.calibration_lapsed')
  if (notReadyOnly) q.where('u.ready', false)
  return (await q).map((r: any) => ({ serial: r.serial, step: r.step ?? null, latestVerdict: r.latest_verdict ?? null, calibrationLapsed: !!r.calibration_lapsed }))
}

/** Runs stored after the given moment (the (lot_id, received_at) index): for a released lot, what arrived after its release. */
export async function runsReceivedSince(db: Knex, lotId: number, since: Date): Promise<number> {
  const r = await db('test_runs').where({ lot_id: lotId }).andWhere('received_at', '>', since).count({ n: '*' }).first()
  return Number((r as any)?.n ?? 0)
}
