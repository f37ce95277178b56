import type { Knex } from 'knex'

/** One parameter of one lot; with revisionId, only the values judged by that revision (0: stored without one). */
export type ParamKey = { lotId: number; step: string; name: string; qualifier: number; firstOnly: boolean; revisionId?: number }

// implausible values are stored and judged but kept out of every chart, as they are out of the statistics
function scope(db: Knex, k: ParamKey) {
  const q = db('measurements as m').where({ 'm.lot_id': k.lotId, 'm.name': k.name, 'm.qualifier': k.qualifier, 'm.step': k.step, 'm.implausible': false })
  if (k.revisionId !== undefined) q.where('m.revision_id', k.revisionId)
  return k.firstOnly ? q.where('m.first_attempt', true) : q
}

export type PointRow = { value: number; startedAt: Date; runId: string; serial: string; station: string }

/** Points in test order: the first `head` (baseline) or the last `tail` (chart), with serial and station. */
export async function parameterPoints(db: Knex, k: ParamKey, opts: { head?: number; tail?: number }): Promise<PointRow[]> {
  const q = scope(db, k).join('test_runs as r', 'r.id', 'm.run_id').join('units as u', 'u.id', 'r.unit_id').join('stations as s', 's.id', 'm.station_id')
    .select('m.value', 'm.started_at', 'r.uuid', 'u.serial', 's.name as station')
  const rows = opts.head !== undefined
    ? await q.orderBy([{ column: 'm.started_at' }, { column: 'm.id' }]).limit(opts.head)
    : (await q.orderBy([{ column: 'm.started_at', order: 'desc' }, { column: 'm.id', order: 'desc' }]).limit(opts.tail ?? 2000)).reverse()
  return rows.map((r: any) => ({ value: r.value, startedAt: r.started_at, runId: r.uuid, serial: r.serial, station: r.station }))
}

export type RevisionMoments = { revisionId: number; n: number; mean: number | null; sd: number | null; min: number | null; max: number | null }

/** Count, mean, sample sd and range of the parameter's values per revision judged, in one pass over its index range. */
export async function parameterMomentsByRevision(db: Knex, k: Omit<ParamKey, 'revisionId'>): Promise<RevisionMoments[]> {
  const rows = await scope(db, k).groupBy('m.revision_id')
    .select('m.revision_id', db.raw('COUNT(*) AS n, AVG(value) AS mean, STDDEV_SAMP(value) AS sd, MIN(value) AS min, MAX(value) AS max'))
  return rows.map((r: any) => ({
    revisionId: Number(r.revision_id), n: Number(r.n), mean: r.mean === null ? null : Number(r.mean), sd: r.sd === null ? null : Number(r.sd),
    min: r.min === null ? null : Number(r.min), max: r.max === null ? null : Number(r.max),
  }))
}

/** Centred regression sums of value against test order (x = rank / 1000), one pass in the database. */
export async function parameterTrendSums(db: Knex, k: ParamKey, n: number, centre: number) {
  const inner = scope(db, k).select(db.raw('value - ? AS y, (ROW_NUMBER() OVER (ORDER BY m.started_at, m.id) - 1 - ?) / 1000 AS dx', [centre, (n - 1) / 2]))
  const r = await db.from(inner.as('t')).first(db.raw('COUNT(*) AS n, SUM(dx * dx) AS sxx, SUM(dx * y) AS sxy, SUM(y) AS sy, SUM(y * y) AS syy'))
  return { n: Number(r.n), sxx: Number(r.sxx), sxy: Number(r.sxy), sy: Number(r.sy), syy: Number(r.syy) }
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
