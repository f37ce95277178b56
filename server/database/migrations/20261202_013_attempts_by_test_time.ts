import type { Knex } from 'knex'

// Attempts were numbered in order of arrival; they follow test time now (started, then finished, then the station's
// run id). Stored runs are numbered again that way, with the first-attempt flags, the units' step rows and the yield
// counters that follow from the numbering. The parameter statistics are rebuilt by the fold (the runs were queued
// again by the migration before this one).
export async function up(knex: Knex): Promise<void> {
  // two passes, so the unique (unit, step, attempt) key never sees two runs with one number
  await knex.raw(`UPDATE test_runs r JOIN (
      SELECT id, ROW_NUMBER() OVER (PARTITION BY unit_id, step ORDER BY started_at, finished_at, uuid) AS n FROM test_runs
    ) o ON o.id = r.id SET r.attempt = o.n + 1000000 WHERE r.attempt <> o.n`)
  await knex.raw('UPDATE test_runs SET attempt = attempt - 1000000 WHERE attempt > 1000000')
  await knex.raw('UPDATE measurements m JOIN test_runs r ON r.id = m.run_id SET m.first_attempt = (r.attempt = 1) WHERE m.first_attempt <> (r.attempt = 1)')
  await knex.raw(`UPDATE unit_steps us
      JOIN test_runs f ON f.unit_id = us.unit_id AND f.step = us.step AND f.attempt = 1
      JOIN test_runs l ON l.unit_id = us.unit_id AND l.step = us.step AND l.attempt = us.attempts
    SET us.first_verdict = f.server_verdict, us.latest_verdict = l.server_verdict, us.latest_run_id = l.id`)
  await knex('lot_step_stats').del()
  await knex.raw(`INSERT INTO lot_step_stats (lot_id, step, station_id, runs, units, first_pass, latest_pass)
    SELECT r.lot_id, r.step, r.station_id, COUNT(*), SUM(r.attempt = 1), SUM(r.attempt = 1 AND r.server_verdict = 'pass'),
           SUM(r.id = us.latest_run_id AND us.latest_verdict = 'pass')
    FROM test_runs r JOIN unit_steps us ON us.unit_id = r.unit_id AND us.step = r.step
    GROUP BY r.lot_id, r.step, r.station_id`)
}

// numbering by test time is a valid numbering for the older code too: nothing to undo
export async function down(): Promise<void> {}
