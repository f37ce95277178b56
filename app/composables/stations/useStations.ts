import type { StationCreated, StationSummary } from '#shared/types/station'

export type NewStationForm = { name: string; location: string; description: string }

/** Every station with today's runs and its calibration state, and creating one (its token is in the answer, once). */
export function useStations() {
  const list = useFetch<{ stations: StationSummary[] }>('/api/stations', { key: 'stations', default: () => ({ stations: [] }) })
  async function create(body: NewStationForm): Promise<StationCreated> {
    const r = await $fetch<StationCreated>('/api/stations', { method: 'POST', body })
    await list.refresh()
    return r
  }
  // `ready`: the first read, for the page to await before it renders on the server
  return { ...list, ready: list, create }
}
