import type { Knex } from 'knex'

/** One parameter of one lot; with revisionId, only the values judged by that revision (0: stored without one). */
export type ParamKey = { lotId: number; step: string; name: string; qualifier: number; firstOnly: boolean; revisionId?: number }

// implausible values are stored and judged but kept out of every chart, as they are out of the statistics
function scope(db: Knex, k: ParamKey) {
  const q = db('measurements as m').where({ 'm.lot_id': k.lotId, 'm.name': k.name, 'm.qualifier': k.qualifier, 'm.step': k.step, 'm.implausible': false })
  if (k.revisionId !== undefined) q.where('m.revision_id', k.revisionId)
  return k.firstOnly ? q.where('m.first_attempt', true) : q
}

export type RevisionMoments = { revisionId: number; n: number; mean: number | null; sd: number | null; min: number | null; max: number | null }

export type PointRow = { value: number; startedAt: Date; runId: string; serial: string; station: string }

/**
 * Points in test order: the first `head` (baseline) or the last `tail` (chart), with serial and station. With the
 * revision given this reads measurements_series_idx forwards or backwards from one end, the attempt and plausibility
 * filtered on the few rows read.
 */
export async function parameterPoints(db: Knex, k: ParamKey, opts: { head?: number; tail?: number }): Promise<PointRow[]> {
  const q = scope(db, k).join('test_runs as r', 'r.id', 'm.run_id').join('units as u', 'u.id', 'r.unit_id').join('stations as s', 's.id', 'm.station_id')
    .select('m.value', 'm.started_at', 'r.uuid', 'u.serial', 's.name as station')
  const rows = opts.head !== undefined
    ? await q.orderBy([{ column: 'm.started_at' }, { column: 'm.id' }]).limit(opts.head)
    : (await q.orderBy([{ column: 'm.started_at', order: 'desc' }, { column: 'm.id', order: 'desc' }]).limit(opts.tail ?? 2000)).reverse()
  return rows.map((r: any) => ({ value: r.value, startedAt: r.started_at, runId: r.uuid, serial: r.serial, station: r.station }))
}

export async function findBaseline(db: Knex, k: Omit<ParamKey, 'firstOnly' | 'revisionId'>) {
  return db('control_baselines').where({ lot_id: k.lotId, step: k.step, name: k.name, qualifier: k.qualifier }).first()
}

export async function saveBaseline(db: Knex, k: Omit<ParamKey, 'firstOnly' | 'revisionId'>, b: { centre: number; sigma: number; n: number; setBy: number }) {
  await db.raw(
    `INSERT INTO control_baselines (lot_id, step, name, qualifier, centre, sigma, n, set_by) VALUES (?, ?, ?, ?, ?, ?, ?, ?)
     ON DUPLICATE KEY UPDATE centre = VALUES(centre), sigma = VALUES(sigma), n = VALUES(n), set_by = VALUES(set_by), set_at = NOW(3)`,
    [k.lotId, k.step, k.name, k.qualifier, b.centre, b.sigma, b.n, b.setBy])
}

export async function deleteBaseline(db: Knex, k: Omit<ParamKey, 'firstOnly' | 'revisionId'>) {
  return db('control_baselines').where({ lot_id: k.lotId, step: k.step, name: k.name, qualifier: k.qualifier }).del()
}
