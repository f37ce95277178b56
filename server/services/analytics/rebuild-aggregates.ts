import type { Knex } from 'knex'

const PARTITION = 'PARTITION BY step, name, qualifier, revision_id, station_id'
// the sample: plausible first attempts
const SAMPLE = '(first_attempt AND NOT implausible)'

/**
 * Recomputes a lot's aggregate rows from its stored runs and measurements, in one transaction.
 * For bulk loads and repair; the ingest path keeps the same rows up to date incrementally. Runs still queued for
 * the fold are left out here and left in the queue, so the fold adds them once, afterwards. It does not take the
 * statistics lock itself: its row locks make a fold of the same lot wait, and its caller (a script, a test) may
 * already hold that lock to keep folders away.
 */
export async function rebuildLotAggregates(db: Knex, lotId: number): Promise<void> {
  await db.transaction(async (trx) => {
    await trx('lot_param_stats').where({ lot_id: lotId }).del()
    await trx('lot_step_stats').where({ lot_id: lotId }).del()
    await trx.raw(
      `INSERT INTO lot_param_stats (lot_id, step, name, qualifier, revision_id, station_id, unit, n, shift, sum_d, sumsq_d, min_value, max_value,
         mr_sum, mr_n, last_value, last_started_at, mr_stale, out_of_spec, fail_all)
       SELECT ?, step, name, qualifier, revision_id, station_id, MIN(unit), SUM(sample), COALESCE(MIN(shift), MIN(value)),
         COALESCE(SUM(IF(sample, value - shift, 0)), 0), COALESCE(SUM(IF(sample, (value - shift) * (value - shift), 0)), 0),
         COALESCE(MIN(IF(sample, value, NULL)), MIN(value)), COALESCE(MAX(IF(sample, value, NULL)), MAX(value)),
         COALESCE(SUM(mr), 0), COUNT(mr), MAX(last_value), MAX(IF(sample, started_at, NULL)), 0,
         SUM(sample AND ((lsl IS NOT NULL AND value < lsl) OR (usl IS NOT NULL AND value > usl))), SUM(verdict = 'fail')
       FROM (
         SELECT step, name, qualifier, revision_id, station_id, unit, value, lsl, usl, verdict, started_at, ${SAMPLE} AS sample,
           AVG(IF(${SAMPLE}, value, NULL)) OVER (${PARTITION}) AS shift,
           IF(${SAMPLE}, ABS(value - LAG(value) OVER (${PARTITION}, ${SAMPLE} ORDER BY started_at, id)), NULL) AS mr,
           IF(${SAMPLE} AND ROW_NUMBER() OVER (${PARTITION}, ${SAMPLE} ORDER BY started_at DESC, id DESC) = 1, value, NULL) AS last_value
         FROM measurements WHERE lot_id = ? AND run_id NOT IN (SELECT run_id FROM lot_stats_pending WHERE lot_id = ?)
       ) t
       GROUP BY step, name, qualifier, revision_id, station_id`, [lotId, lotId, lotId])
    await trx.raw(
      `INSERT INTO lot_step_stats (lot_id, step, station_id, runs, units, first_pass, latest_pass)
       SELECT ?, r.step, r.station_id, COUNT(*), SUM(r.attempt = 1), SUM(r.attempt = 1 AND r.server_verdict = 'pass'),
              SUM(r.id = us.latest_run_id AND us.latest_verdict = 'pass')
       FROM test_runs r JOIN unit_steps us ON us.unit_id = r.unit_id AND us.step = r.step
       WHERE r.lot_id = ? GROUP BY r.step, r.station_id`, [lotId, lotId])
  })
}
