// Limits from a CSV file: the server previews it first, and only a file without errors is applied.
import type { Ref } from 'vue'
import type { LimitsImportApplied, LimitsImportPreview } from '#shared/types/spec'

export function useLimitsCsvImport(revisionId: Ref<number>, refresh: () => Promise<unknown>) {
  const csvText = ref<string | null>(null)
  const csvName = ref('')
  const preview = ref<LimitsImportPreview | null>(null)
  const csvMessage = ref<string | null>(null)
  async function pickCsv(ev: Event) {
    const file = (ev.target as HTMLInputElement).files?.[0]
    preview.value = null
    csvMessage.value = null
    if (!file) return
    csvName.value = file.name
    csvText.value = await file.text()
    try {
      preview.value = await $fetch<LimitsImportPreview>(`/api/revisions/${revisionId.value}/limits/import?preview=1`, { method: 'POST', body: csvText.value, headers: { 'content-type': 'text/csv' } })
    } catch (e: any) {
      csvMessage.value = e?.data?.detail ?? 'The file could not be read.'
    }
  }
  async function applyCsv() {
    try {
      const r = await $fetch<LimitsImportApplied>(`/api/revisions/${revisionId.value}/limits/import`, { method: 'POST', body: csvText.value!, headers: { 'content-type': 'text/csv' } })
      csvMessage.value = `Imported ${r.count} limits from ${csvName.value}.`
      preview.value = null
      await refresh()
    } catch (e: any) {
      csvMessage.value = e?.data?.detail ?? 'Import refused.'
    }
  }
  const previewErrorRows = computed(() => new Set(preview.value?.errors.map((e) => e.row) ?? []))
  return { preview, csvMessage, pickCsv, applyCsv, previewErrorRows }
}
