import type { ImportFormat, ImportJob, ImportJobDetail, ImportStarted } from '#shared/types/imports'
import { sendImportFile } from './sendImportFile'

export type ImportPhase = 'idle' | 'uploading' | 'checking' | 'processing' | 'finished'
/** The job on show; its rejected lines once it has ended. */
export type ShownJob = ImportJob & { rejections?: ImportJobDetail['rejections'] }

/**
 * The import on show: uploading a file, following its job until it ends (polling every half second), cancelling
 * it, or opening a past one. `changed` is called whenever the list of recent imports may have changed.
 */
export function useImportJob(changed: () => Promise<unknown>) {
  const phase = ref<ImportPhase>('idle')
  const sent = ref({ loaded: 0, total: 0 })
  const job = ref<ShownJob | null>(null)
  const message = ref<string | null>(null)
  const problems = ref<string[]>([])
  const cancelling = ref(false)
  let timer: ReturnType<typeof setTimeout> | undefined

  const busy = computed(() => phase.value === 'uploading' || phase.value === 'checking' || phase.value === 'processing')
  const uploadPct = computed(() => (sent.value.total ? Math.round((100 * sent.value.loaded) / sent.value.total) : 0))
  const processPct = computed(() => {
    const j = job.value
    if (!j) return 0
    if (j.status === 'done') return 100
    return j.linesTotal ? Math.min(100, Math.round((100 * j.linesDone) / j.linesTotal)) : 0
  })

  async function show(id: string) {
    const j = await $fetch<ImportJobDetail>(`/api/imports/${id}`, { query: { rejections: 200 } })
    job.value = j
    return j
  }

  async function poll(id: string) {
    clearTimeout(timer)
    try {
      const j = await $fetch<ImportJobDetail>(`/api/imports/${id}`, { query: { rejections: 0 } })
      if (job.value?.id !== id) return
      job.value = { ...j, rejections: job.value?.rejections }
      if (j.status === 'running' && !j.stalled) {
        timer = setTimeout(() => poll(id), 500)
        return
      }
      await show(id)
      phase.value = 'finished'
      await changed()
    } catch (e: any) {
      message.value = e?.data?.detail ?? 'Lost track of the import; see the list of recent imports.'
      phase.value = 'finished'
    }
  }

  async function start(file: File, station: string, format: ImportFormat) {
    message.value = null
    problems.value = []
    job.value = null
    sent.value = { loaded: 0, total: file.size }
    phase.value = 'uploading'
    try {
      const r = await sendImportFile(file, station, format, {
        progress: (loaded, total) => { sent.value = { loaded, total } },
        received: () => { phase.value = 'checking' },
      })
      if (r.status !== 202) {
        message.value = r.body?.detail ?? `The server answered ${r.status}.`
        problems.value = (r.body?.errors ?? []).map((e: any) => e.message)
        phase.value = 'idle'
        return
      }
      const started = r.body as ImportStarted
      job.value = started.job
      phase.value = 'processing'
      await changed()
      timer = setTimeout(() => poll(started.jobId), 500)
    } catch (e: any) {
      message.value = e?.message ?? 'The upload failed.'
      phase.value = 'idle'
    }
  }

  /** Asks the server to stop the import shown; polling then follows it to its end. */
  async function cancel() {
    if (!job.value) return
    cancelling.value = true
    message.value = null
    try {
      const j = await $fetch<ImportJob>(`/api/imports/${job.value.id}/cancel`, { method: 'POST' })
      job.value = { ...j, rejections: job.value.rejections }
      if (j.status !== 'running') { await show(j.id); phase.value = 'finished' }
      await changed()
    } catch (e: any) {
      message.value = e?.data?.detail ?? 'The import could not be cancelled.'
    } finally {
      cancelling.value = false
    }
  }

  /** Carries a stuck import on from its kept file; polling then follows it. */
  async function resume() {
    if (!job.value) return
    message.value = null
    try {
      const j = await $fetch<ImportJob>(`/api/imports/${job.value.id}/resume`, { method: 'POST' })
      job.value = { ...j, rejections: job.value.rejections }
      phase.value = 'processing'
      timer = setTimeout(() => poll(j.id), 500)
      await changed()
    } catch (e: any) {
      message.value = e?.data?.detail ?? 'The import could not be resumed.'
    }
  }

  async function open(j: ImportJob) {
    if (busy.value) return
    message.value = null
    problems.value = []
    try {
      const full = await show(j.id)
      phase.value = full.status === 'running' && !full.stalled ? 'processing' : 'finished'
      if (phase.value === 'processing') timer = setTimeout(() => poll(j.id), 500)
    } catch (e: any) {
      message.value = e?.data?.detail ?? 'Could not open this import.'
    }
  }

  onBeforeUnmount(() => clearTimeout(timer))
  return { phase, sent, job, message, problems, cancelling, busy, uploadPct, processPct, start, cancel, resume, open }
}

export type ImportJobHandle = ReturnType<typeof useImportJob>
