import type { AppSettingsDto } from '#shared/types/settings'
import { usePlantTime } from './usePlantTime'

/** The run-time settings, and the administrator's changes of the calibration due-soon period and the plant's time zone. */
export function useAppSettings() {
  const { zone } = usePlantTime()
  const settings = useFetch<AppSettingsDto>('/api/settings', {
    key: 'app-settings',
    default: () => ({
      calibrationDueSoonDays: { value: 30, updatedAt: null, updatedBy: null },
      plantTimeZone: { value: zone.value, updatedAt: null, updatedBy: null },
    }),
  })
  async function saveDueSoonDays(days: number) {
    const r = await $fetch<AppSettingsDto>('/api/settings/calibration-due-soon-days', { method: 'PUT', body: { days } })
    settings.data.value = r
    return r
  }
  async function savePlantTimeZone(name: string) {
    const r = await $fetch<AppSettingsDto>('/api/settings/plant-time-zone', { method: 'PUT', body: { zone: name } })
    settings.data.value = r
    // every page of this visit shows times on the new clock from now on
    zone.value = r.plantTimeZone.value
    return r
  }
  return { settings: settings.data, refresh: settings.refresh, saveDueSoonDays, savePlantTimeZone }
}
