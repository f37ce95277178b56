import { schemaRows, type SchemaRow } from '#shared/utils/schema-rows'

/** The run schema as the server serves it to stations, and its fields as table rows. */
export async function useRunSchema() {
  const fetched = await useFetch<Record<string, any>>('/api/v1/schema/run.json', { key: 'run-schema', default: () => ({}) })
  const rows = computed<SchemaRow[]>(() => (fetched.data.value?.properties ? schemaRows(fetched.data.value) : []))
  return { ...fetched, rows }
}
