// Checks a list of serials against a draft shipment in parts of 500 lines, so the page can show progress;
// the server checks duplicates within each part, and this merges them across parts.
import type { SerialPreview, SerialPreviewRow, SerialRowVerdict } from '#shared/types/shipment'

export const CHUNK = 500

export function useSerialPreview(shipmentId: () => number) {
  const rows = ref<SerialPreviewRow[]>([])
  const progress = ref(0)
  const checking = ref(false)
  const counts = computed(() => {
    const c: Partial<Record<SerialRowVerdict, number>> = {}
    for (const r of rows.value) c[r.verdict] = (c[r.verdict] ?? 0) + 1
    return c
  })

  async function check(lines: string[]) {
    checking.value = true
    rows.value = []
    progress.value = 0
    const seen = new Set<string>()
    const out: SerialPreviewRow[] = []
    try {
      for (let i = 0; i < lines.length; i += CHUNK) {
        const part = await $fetch<SerialPreview>(`/api/shipments/${shipmentId()}/serials/preview`, { method: 'POST', body: { lines: lines.slice(i, i + CHUNK), firstLine: i + 1 } })
        for (const r of part.rows) {
          const key = `${r.partNumber}\u0000${r.serial}`
          if (r.verdict === 'ok' && seen.has(key)) out.push({ ...r, verdict: 'duplicate', message: 'already earlier in the list' })
          else { if (r.partNumber && r.serial) seen.add(key); out.push(r) }
        }
        progress.value = Math.min(1, (i + CHUNK) / lines.length)
      }
      rows.value = out
    } finally {
      checking.value = false
    }
  }

  function clear() { rows.value = []; progress.value = 0 }
  return { rows, counts, progress, checking, check, clear }
}
