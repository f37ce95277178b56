import type { Knex } from 'knex'

/**
 * The lot's yield counters counted again from its runs: each counter on the row of the station that took the run it
 * counts (units and first passes on the first attempt's station, latest passes on the latest run's).
 */
export async function recountStepStats(trx: Knex.Transaction, lotId: number): Promise<void> {
  await trx('lot_step_stats').where({ lot_id: lotId }).del()
  await trx.raw(
    `INSERT INTO lot_step_stats (lot_id, step, station_id, runs, units, first_pass, latest_pass)
     SELECT ?, r.step, r.station_id, COUNT(*), SUM(r.attempt = 1), SUM(r.attempt = 1 AND r.server_verdict = 'pass'),
            SUM(r.id = us.latest_run_id AND us.latest_verdict = 'pass')
     FROM test_runs r JOIN unit_steps us ON us.unit_id = r.unit_id AND us.step = r.step
     WHERE r.lot_id = ? GROUP BY r.step, r.station_id`, [lotId, lotId])
}
