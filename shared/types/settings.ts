/** The run-time settings as GET /api/settings answers them. */
export type AppSettingsDto = {
  calibrationDueSoonDays: { value: number; updatedAt: string | null; updatedBy: string | null }
}
