// Run-time settings: read from the database each time they are needed (no process cache, so every instance sees a
// change at once); changed by an administrator, audited in the same transaction.
import type { Knex } from 'knex'
import type { AppSettingsDto } from '../../shared/types/settings'
import { DUE_SOON_DAYS } from '../../shared/utils/calibration'
import { writeAudit } from '../database/repositories/audit'
import { lockSetting, readSettings, writeSetting } from '../database/repositories/app-settings'

const DUE_SOON = 'calibration_due_soon_days'

function asDays(value: string | undefined): number {
  const n = Number(value)
  return Number.isInteger(n) && n >= 1 ? n : DUE_SOON_DAYS
}

/** Days before its due date an instrument counts as due soon: the station badges and the calibration_due alert rule. */
export async function calibrationDueSoonDays(db: Knex): Promise<number> {
  const [row] = await readSettings(db, [DUE_SOON])
  return asDays(row?.value)
}

export async function appSettings(db: Knex): Promise<AppSettingsDto> {
  const [row] = await readSettings(db, [DUE_SOON])
  return {
    calibrationDueSoonDays: { value: asDays(row?.value), updatedAt: row?.updatedAt ? new Date(row.updatedAt).toISOString() : null, updatedBy: row?.updatedBy ?? null },
  }
}

export async function setCalibrationDueSoonDays(db: Knex, actorId: number, days: number, now = new Date()): Promise<AppSettingsDto> {
  await db.transaction(async (trx) => {
    const before = await lockSetting(trx, DUE_SOON)
    await writeSetting(trx, DUE_SOON, String(days), actorId, now)
    await writeAudit(trx, { userId: actorId, action: 'update', entity: 'app_setting', entityId: DUE_SOON, before: before ? { days: asDays(before.value) } : null, after: { days } })
  })
  return appSettings(db)
}
