// Calibration state of a station's instruments, shared by the station pages and the API.

export const CALIBRATION_STATES = ['ok', 'due_soon', 'lapsed'] as const
export type CalibrationState = (typeof CALIBRATION_STATES)[number]

/** The due-soon period until an administrator sets another (app_settings calibration_due_soon_days). */
export const DUE_SOON_DAYS = 30
const DAY_MS = 86_400_000

export const CALIBRATION_LABELS: Record<CalibrationState, string> = {
  ok: 'CAL OK',
  due_soon: 'CAL DUE SOON',
  lapsed: 'CAL LAPSED',
}

/** Lapsed from the due instant on; due soon within the last `dueSoonDays` days before it. */
export function calibrationState(due: Date | string, now: Date = new Date(), dueSoonDays: number = DUE_SOON_DAYS): CalibrationState {
  const left = new Date(due).getTime() - now.getTime()
  if (Number.isNaN(left)) throw new RangeError('calibration due date is not a date')
  if (left <= 0) return 'lapsed'
  return left <= dueSoonDays * DAY_MS ? 'due_soon' : 'ok'
}

/** The worst state among a station's instruments; null when it has none. */
export function worstCalibration(states: readonly CalibrationState[]): CalibrationState | null {
  let worst = -1
  for (const s of states) worst = Math.max(worst, CALIBRATION_STATES.indexOf(s))
  return worst < 0 ? null : CALIBRATION_STATES[worst]!
}

/**
 * A due date as the instant stored: a bare date is 00:00 UTC of that day, so the instrument
 * counts as lapsed on its due date rather than a day later.
 */
export function dueInstant(value: string): Date {
  return new Date(/^\d{4}-\d{2}-\d{2}$/.test(value) ? `${value}T00:00:00Z` : value)
}
