import type { Knex } from 'knex'

/**
 * The plant's time zone (an IANA name), read by every instance: "today" on the floor and the station list begins at the
 * plant's midnight, and pages show times on its clock. The demo plant (Vellmar Frequency Works) keeps Central European time.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw("INSERT IGNORE INTO app_settings (name, value) VALUES ('plant_time_zone', 'Europe/Berlin')")
}

export async function down(knex: Knex): Promise<void> {
  await knex('app_settings').where({ name: 'plant_time_zone' }).delete()
}
