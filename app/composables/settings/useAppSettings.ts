import type { AppSettingsDto } from '#shared/types/settings'

/** The run-time settings, and the administrator's change of the calibration due-soon period. */
export function useAppSettings() {
  const settings = useFetch<AppSettingsDto>('/api/settings', {
    key: 'app-settings', default: () => ({ calibrationDueSoonDays: { value: 30, updatedAt: null, updatedBy: null } }),
  })
  async function saveDueSoonDays(days: number) {
    const r = await $fetch<AppSettingsDto>('/api/settings/calibration-due-soon-days', { method: 'PUT', body: { days } })
    settings.data.value = r
    return r
  }
  return { settings: settings.data, refresh: settings.refresh, saveDueSoonDays }
}
