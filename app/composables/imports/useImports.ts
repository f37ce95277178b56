import type { ImportList, ImportStationChoice } from '#shared/types/imports'

/** The latest imports, newest first. */
export function useRecentImports() {
  return useFetch<ImportList>('/api/imports', { key: 'imports-recent', default: () => ({ imports: [] }) })
}

/** The stations runs can be imported for, by name. */
export function useImportStations() {
  return useFetch<{ stations: ImportStationChoice[] }>('/api/stations', {
    key: 'import-stations', default: () => ({ stations: [] }),
    transform: (r) => ({ stations: r.stations.map((s) => ({ id: s.id, name: s.name, location: s.location })) }),
  })
}
