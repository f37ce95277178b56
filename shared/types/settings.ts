/** One setting's value with who changed it last, and when. */
export type SettingValue<T> = { value: T; updatedAt: string | null; updatedBy: string | null }

/** The run-time settings as GET /api/settings answers them. */
export type AppSettingsDto = {
  calibrationDueSoonDays: SettingValue<number>
  /** the plant's IANA time zone */
  plantTimeZone: SettingValue<string>
}

/** GET /api/plant-time: the plant's zone, for every page (signed in or not). */
export type PlantTimeDto = { zone: string }
