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
  const dir = opts.head !== undefined ? 'asc' : 'desc'
  // the few points are taken from the index first and only then joined to their runs, units and stations, so the
  // join order cannot turn the read into a pass over the lot
  const picked = scope(db, k).select('m.id', 'm.value', 'm.started_at', 'm.run_id', 'm.station_id')
    .orderBy([{ column: 'm.started_at', order: dir }, { column: 'm.id', order: dir }]).limit(opts.head ?? opts.tail ?? 2000)
  const rows = await db.from(picked.as('p')).join('test_runs as r', 'r.id', 'p.run_id').join('units as u', 'u.id', 'r.unit_id').join('stations as s', 's.id', 'p.station_id')
    .select('p.value', 'p.started_at', 'r.uuid', 'u.serial', 's.name as station').orderBy([{ column: 'p.started_at' }, { column: 'p.id' }])
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
