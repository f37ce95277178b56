import type { Knex } from 'knex'

// Instruments get an identity of their own, a history of the stations that held them and a history of calibration
// records; every run records the instruments it was taken with and the record in force for each. The former
// per-station list (one due date per row, rewritten on every edit) is carried over: each row becomes an instrument
// held since its station was created, with one calibration record bearing that due date.

const OLD = 'instruments_list_before_history'

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`RENAME TABLE instruments TO ${OLD}`)
  await knex.schema.createTable('instruments', (t) => {
    t.increments('id')
    t.string('asset_number', 32).notNullable().unique()
    t.string('kind', 60).notNullable()
    t.string('model', 80).notNullable()
    t.string('serial', 64).notNullable()
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('created_by').unsigned().references('users.id')
  })
  // from_at inclusive, until_at exclusive; until_at null while the station still holds it
  await knex.schema.createTable('instrument_holdings', (t) => {
    t.increments('id')
    t.integer('instrument_id').unsigned().notNullable().references('instruments.id')
    t.integer('station_id').unsigned().notNullable().references('stations.id')
    t.datetime('from_at', { precision: 3 }).notNullable()
    t.datetime('until_at', { precision: 3 })
    t.index(['instrument_id', 'from_at'])
    t.index(['station_id', 'from_at'])
  })
  // never deleted: a record stops being in force when superseded (from superseded_from on) or by a later calibration
  await knex.schema.createTable('calibration_records', (t) => {
    t.increments('id')
    t.integer('instrument_id').unsigned().notNullable().references('instruments.id')
    // null only on records carried over from the former list, which did not keep them
    t.string('certificate_number', 64)
    t.string('laboratory', 120)
    t.enum('as_found', ['in_tolerance', 'out_of_tolerance'])
    t.datetime('calibrated_on', { precision: 3 }).notNullable()
    t.datetime('due_at', { precision: 3 }).notNullable()
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('created_by').unsigned().references('users.id')
    t.datetime('superseded_from', { precision: 3 })
    t.string('superseded_reason', 500)
    t.datetime('superseded_at', { precision: 3 })
    t.integer('superseded_by').unsigned().references('users.id')
    t.index(['instrument_id', 'calibrated_on'])
  })
  // kept apart so that reading records never drags the documents along
  await knex.schema.createTable('calibration_certificates', (t) => {
    t.integer('record_id').unsigned().primary().references('calibration_records.id')
    t.specificType('pdf', 'MEDIUMBLOB').notNullable()
    t.integer('bytes').unsigned().notNullable()
    t.specificType('sha256', 'CHAR(64)').notNullable()
    t.string('file_name', 200)
  })
  await knex.schema.createTable('run_instruments', (t) => {
    t.bigInteger('run_id').unsigned().notNullable().references('test_runs.id').onDelete('CASCADE')
    t.integer('instrument_id').unsigned().notNullable().references('instruments.id')
    t.integer('calibration_id').unsigned().references('calibration_records.id')
    // the station named the instrument in its post, rather than Tercet reading it from the station's holdings
    t.boolean('named').notNullable().defaultTo(false)
    t.primary(['run_id', 'instrument_id'])
    t.index(['instrument_id', 'calibration_id'])
    t.index(['calibration_id'])
  })
  // one row: raised by every change of holdings or calibration records, so every process sees its cache is stale
  await knex.schema.createTable('calibration_history_version', (t) => {
    t.tinyint('id').unsigned().primary()
    t.bigInteger('version').unsigned().notNullable()
  })
  await knex('calibration_history_version').insert({ id: 1, version: 1 })
  // runs stored on a judgement made before a history change committed, to be judged again
  await knex.schema.createTable('calibration_rejudge', (t) => {
    t.bigInteger('run_id').unsigned().primary().references('test_runs.id').onDelete('CASCADE')
    t.datetime('queued_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })

  const old = await knex(`${OLD} as i`).join('stations as s', 's.id', 'i.station_id').orderBy('i.id')
    .select('i.id', 'i.station_id', 'i.kind', 'i.model', 'i.serial', 'i.calibration_due', 's.created_at')
  for (const r of old) {
    const [instrumentId] = await knex('instruments').insert({
      asset_number: `M-${String(r.id).padStart(5, '0')}`, kind: r.kind, model: r.model, serial: r.serial, created_at: r.created_at,
    })
    await knex('instrument_holdings').insert({ instrument_id: instrumentId, station_id: r.station_id, from_at: r.created_at })
    await knex('calibration_records').insert({ instrument_id: instrumentId, calibrated_on: r.created_at, due_at: r.calibration_due, created_at: r.created_at })
  }
  await knex.schema.dropTable(OLD)
}

export async function down(knex: Knex): Promise<void> {
  // back to one row per instrument a station holds now, due when its latest standing record says
  const held = await knex('instrument_holdings as h').join('instruments as i', 'i.id', 'h.instrument_id').whereNull('h.until_at')
    .orderBy('h.id').select('h.station_id', 'h.from_at', 'i.id', 'i.kind', 'i.model', 'i.serial')
  const rows = []
  for (const h of held) {
    const rec = await knex('calibration_records').where({ instrument_id: h.id }).whereNull('superseded_from')
      .orderBy('calibrated_on', 'desc').orderBy('id', 'desc').first('due_at')
    // with no standing record the instrument was lapsed: its installation is the latest date it could be due
    rows.push({ station_id: h.station_id, kind: h.kind, model: h.model, serial: h.serial, calibration_due: rec?.due_at ?? h.from_at })
  }
  for (const t of ['calibration_rejudge', 'calibration_history_version', 'run_instruments', 'calibration_certificates', 'calibration_records', 'instrument_holdings', 'instruments']) {
    await knex.schema.dropTable(t)
  }
  await knex.schema.createTable('instruments', (t) => {
    t.increments('id')
    t.integer('station_id').unsigned().notNullable().references('stations.id').onDelete('CASCADE')
    t.string('kind', 60).notNullable()
    t.string('model', 80).notNullable()
    t.string('serial', 64).notNullable()
    t.datetime('calibration_due', { precision: 3 }).notNullable()
    t.index(['station_id', 'calibration_due'])
  })
  if (rows.length) await knex('instruments').insert(rows)
}
