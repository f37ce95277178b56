// Run-time settings: read from the database each time they are needed (no process cache, so every instance sees a
// change at once); changed by an administrator, audited in the same transaction.
import type { Knex } from 'knex'
import type { AppSettingsDto } from '../../shared/types/settings'
import { DUE_SOON_DAYS } from '../../shared/utils/calibration'
import { canonicalTimeZone, DEFAULT_PLANT_TIME_ZONE } from '../../shared/utils/plant-time'
import { writeAudit } from '../database/repositories/audit'
import { lockSetting, readSettings, writeSetting, type SettingRow } from '../database/repositories/app-settings'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

const DUE_SOON = 'calibration_due_soon_days'
const PLANT_ZONE = 'plant_time_zone'

function asDays(value: string | undefined): number {
  const n = Number(value)
  return Number.isInteger(n) && n >= 1 ? n : DUE_SOON_DAYS
}

/** Days before its due date an instrument counts as due soon: the station badges and the calibration_due alert rule. */
export async function calibrationDueSoonDays(db: Knex): Promise<number> {
  const [row] = await readSettings(db, [DUE_SOON])
  return asDays(row?.value)
}

// a stored name the runtime no longer knows reads as the default rather than breaking every page
const asZone = (value: string | undefined): string => canonicalTimeZone(value) ?? DEFAULT_PLANT_TIME_ZONE

/** The plant's IANA time zone: where its days begin and the clock the pages show times on. */
export async function plantTimeZone(db: Knex): Promise<string> {
  const [row] = await readSettings(db, [PLANT_ZONE])
  return asZone(row?.value)
}

function changed(row: SettingRow | undefined) {
  return { updatedAt: row?.updatedAt ? new Date(row.updatedAt).toISOString() : null, updatedBy: row?.updatedBy ?? null }
}

export async function appSettings(db: Knex): Promise<AppSettingsDto> {
  const rows = await readSettings(db, [DUE_SOON, PLANT_ZONE])
  const days = rows.find((r) => r.name === DUE_SOON)
  const zone = rows.find((r) => r.name === PLANT_ZONE)
  return {
    calibrationDueSoonDays: { value: asDays(days?.value), ...changed(days) },
    plantTimeZone: { value: asZone(zone?.value), ...changed(zone) },
  }
}

export async function setCalibrationDueSoonDays(db: Knex, actorId: number, days: number, now = new Date()): Promise<AppSettingsDto> {
  await writeTransaction(db, async (trx) => {
    const before = await lockSetting(trx, DUE_SOON)
    await writeSetting(trx, DUE_SOON, String(days), actorId, now)
    await writeAudit(trx, { userId: actorId, action: 'update', entity: 'app_setting', entityId: DUE_SOON, before: before ? { days: asDays(before.value) } : null, after: { days } })
  })
  return appSettings(db)
}

/** Sets the plant's time zone (any IANA name the runtime knows, stored in its canonical spelling), audited. */
export async function setPlantTimeZone(db: Knex, actorId: number, zone: string, now = new Date()): Promise<AppSettingsDto> {
  const name = canonicalTimeZone(zone)
  if (!name) {
    throw new RuleError(422, `"${zone}" is not a time zone name this server knows (use an IANA name such as Europe/Berlin or UTC).`, [{ pointer: '/zone', message: 'is not a known IANA time zone name' }])
  }
  await writeTransaction(db, async (trx) => {
    const before = await lockSetting(trx, PLANT_ZONE)
    await writeSetting(trx, PLANT_ZONE, name, actorId, now)
    await writeAudit(trx, { userId: actorId, action: 'update', entity: 'app_setting', entityId: PLANT_ZONE, before: before ? { zone: before.value } : null, after: { zone: name } })
  })
  return appSettings(db)
}
