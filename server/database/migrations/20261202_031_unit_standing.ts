import type { Knex } from 'knex'

// A unit's standing kept on its row (what the lot's units list shows and sorts by, and the release check), and per
// lot and station counters of those standings, changed by the write path in the run's transaction by the difference
// a write makes. Both are filled here from the stored rows, with the same SQL as the rebuild
// (repositories/unit-standing.ts), which this file does not import.

const STANDING_COLUMNS = ['state', 'completed', 'first_pass', 'steps_tested', 'max_attempts', 'runs', 'last_step', 'last_station_id', 'last_tested_at', 'latest_run_id', 'ready', 'passed_all']
const SORT_INDEXES: [string, string][] = [
  ['units_lot_serial', 'serial'], ['units_lot_state', 'state, serial'], ['units_lot_attempts', 'max_attempts, serial'], ['units_lot_runs', 'runs, serial'],
  ['units_lot_station', 'last_station_id, serial'], ['units_lot_date', 'last_tested_at, serial'], ['units_lot_step', 'last_step, serial'], ['units_lot_ready', 'ready, serial'],
]

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`ALTER TABLE units
    ADD COLUMN state ENUM('fail', 'incomplete', 'pass', 'untested') NULL,
    ADD COLUMN completed TINYINT(1) NOT NULL DEFAULT 0,
    ADD COLUMN first_pass TINYINT(1) NULL,
    ADD COLUMN steps_tested SMALLINT UNSIGNED NOT NULL DEFAULT 0,
    ADD COLUMN max_attempts INT UNSIGNED NOT NULL DEFAULT 0,
    ADD COLUMN runs INT UNSIGNED NOT NULL DEFAULT 0,
    ADD COLUMN last_step VARCHAR(24) NULL,
    ADD COLUMN last_station_id INT UNSIGNED NULL,
    ADD COLUMN last_tested_at DATETIME(3) NULL,
    ADD COLUMN latest_run_id BIGINT UNSIGNED NULL,
    ADD COLUMN ready TINYINT(1) NOT NULL DEFAULT 0,
    ADD COLUMN passed_all TINYINT(1) NOT NULL DEFAULT 0,
    ${SORT_INDEXES.map(([name, cols]) => `ADD INDEX ${name} (lot_id, ${cols})`).join(',\n    ')}`)
  await knex.raw('ALTER TABLE test_runs ADD INDEX test_runs_lot_received (lot_id, received_at)')
  await knex.schema.createTable('lot_unit_stats', (t) => {
    t.integer('lot_id').unsigned().notNullable()
    // the station whose write changed the counts (0: units without runs); a row may be negative, the lot's sum is right
    t.integer('station_id').unsigned().notNullable()
    for (const c of ['units', 'completed', 'passed', 'failed', 'in_progress', 'untested', 'retested', 'not_ready', 'passed_all']) t.integer(c).notNullable().defaultTo(0)
    t.datetime('first_run_at', { precision: 3 })
    t.datetime('last_run_at', { precision: 3 })
    t.primary(['lot_id', 'station_id'])
  })
  await knex.raw(STANDING_SQL)
  await knex.raw(COUNTERS_SQL)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('lot_unit_stats')
  await knex.raw('ALTER TABLE test_runs DROP INDEX test_runs_lot_received')
  await knex.raw(`ALTER TABLE units ${SORT_INDEXES.map(([name]) => `DROP INDEX ${name}`).join(', ')}, ${STANDING_COLUMNS.map((c) => `DROP COLUMN ${c}`).join(', ')}`)
}

const LAST_STEP = "JSON_UNQUOTE(JSON_EXTRACT(p.steps, CONCAT('$[', JSON_LENGTH(p.steps) - 1, ']')))"
const IN_PRODUCT = 'JSON_CONTAINS(p.steps, JSON_QUOTE(us.step))'

const STANDING_SQL = `UPDATE units u JOIN products p ON p.id = u.product_id
  LEFT JOIN (
    SELECT us.unit_id, COUNT(*) AS steps_tested, SUM(us.attempts) AS runs, MAX(us.attempts) AS max_attempts,
      MAX(us.latest_verdict = 'fail') AS any_fail, MAX(us.first_verdict = 'fail') AS first_fail, MAX(us.latest_run_id) AS latest_run_id,
      MAX(us.step = ${LAST_STEP}) AS at_last,
      SUM(${IN_PRODUCT} AND us.latest_verdict = 'pass' AND NOT r.calibration_lapsed) AS ready_steps,
      SUM(${IN_PRODUCT} AND us.latest_verdict = 'pass') AS pass_steps
    FROM unit_steps us JOIN units uu ON uu.id = us.unit_id JOIN products p ON p.id = uu.product_id JOIN test_runs r ON r.id = us.latest_run_id
    GROUP BY us.unit_id
  ) a ON a.unit_id = u.id
  LEFT JOIN test_runs lr ON lr.id = a.latest_run_id
  SET u.state = CASE WHEN a.unit_id IS NULL THEN 'untested' WHEN a.any_fail = 1 THEN 'fail' WHEN a.at_last = 1 THEN 'pass' ELSE 'incomplete' END,
    u.completed = COALESCE(a.at_last, 0), u.first_pass = IF(a.unit_id IS NULL, NULL, a.first_fail = 0),
    u.steps_tested = COALESCE(a.steps_tested, 0), u.max_attempts = COALESCE(a.max_attempts, 0), u.runs = COALESCE(a.runs, 0),
    u.last_step = lr.step, u.last_station_id = lr.station_id, u.last_tested_at = lr.finished_at, u.latest_run_id = a.latest_run_id,
    u.ready = (COALESCE(a.ready_steps, 0) = JSON_LENGTH(p.steps)),
    u.passed_all = (a.unit_id IS NOT NULL AND a.any_fail = 0 AND JSON_LENGTH(p.steps) > 0 AND a.pass_steps = JSON_LENGTH(p.steps))`

const COUNTERS_SQL = `INSERT INTO lot_unit_stats (lot_id, station_id, units, completed, passed, failed, in_progress, untested, retested, not_ready, passed_all, first_run_at, last_run_at)
  SELECT lot_id, station_id, SUM(units), SUM(completed), SUM(passed), SUM(failed), SUM(in_progress), SUM(untested), SUM(retested), SUM(not_ready), SUM(passed_all), MIN(first_run_at), MAX(last_run_at)
  FROM (
    SELECT lot_id, COALESCE(last_station_id, 0) AS station_id, COUNT(*) AS units, SUM(completed) AS completed, SUM(state = 'pass') AS passed,
      SUM(state = 'fail') AS failed, SUM(state IN ('untested', 'incomplete')) AS in_progress, SUM(state = 'untested') AS untested, SUM(max_attempts > 1) AS retested,
      SUM(ready = 0) AS not_ready, SUM(passed_all) AS passed_all, NULL AS first_run_at, NULL AS last_run_at
    FROM units GROUP BY lot_id, COALESCE(last_station_id, 0)
    UNION ALL
    SELECT lot_id, station_id, 0, 0, 0, 0, 0, 0, 0, 0, 0, MIN(started_at), MAX(finished_at) FROM test_runs GROUP BY lot_id, station_id
  ) x GROUP BY lot_id, station_id`
