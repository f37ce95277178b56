// Loads the plant's time zone once per visit (on the server for the first page, carried to the browser in the payload).
import type { PlantTimeDto } from '#shared/types/settings'

export default defineNuxtPlugin(async () => {
  const zone = useState<string | null>('plant-time-zone', () => null)
  if (zone.value) return
  // an unreachable server leaves times in UTC, which the hover title and the zone name then say
  const reply = await useRequestFetch()<PlantTimeDto>('/api/plant-time').catch(() => null)
  zone.value = reply?.zone ?? 'UTC'
})
