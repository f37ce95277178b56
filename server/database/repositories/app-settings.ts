// Settings an administrator changes while Tercet runs, one row each in app_settings, read by every instance.
import type { Knex } from 'knex'

export type SettingRow = { name: string; value: string; updatedAt: Date; updatedBy: string | null }

export async function readSettings(db: Knex, names: readonly string[]): Promise<SettingRow[]> {
  const rows = await db('app_settings as s').leftJoin('users as u', 'u.id', 's.updated_by').whereIn('s.name', names)
    .select('s.name', 's.value', 's.updated_at', 'u.name as updated_by_name')
  return rows.map((r: any) => ({ name: r.name, value: r.value, updatedAt: r.updated_at, updatedBy: r.updated_by_name ?? null }))
}

/** The setting's row, locked for the caller's transaction (a missing row reads as undefined). */
export async function lockSetting(trx: Knex.Transaction, name: string): Promise<{ value: string } | undefined> {
  return trx('app_settings').where({ name }).forUpdate().first('value')
}

export async function writeSetting(trx: Knex.Transaction, name: string, value: string, userId: number, now: Date): Promise<void> {
  await trx.raw(
    'INSERT INTO app_settings (name, value, updated_at, updated_by) VALUES (?, ?, ?, ?) ON DUPLICATE KEY UPDATE value = VALUES(value), updated_at = VALUES(updated_at), updated_by = VALUES(updated_by)',
    [name, value, now, userId])
}
