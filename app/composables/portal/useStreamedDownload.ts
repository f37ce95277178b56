// Downloads a streamed file (no Content-Length) while counting what has arrived, then saves it through a blob link.
// The server announces the number of files and about how many bytes to expect, which gives the progress.
import { saveBlob } from '~/utils/save-blob'

export type DownloadState = { phase: 'idle' | 'loading' | 'done' | 'error'; received: number; expected: number; files: number; message: string | null }

export function useStreamedDownload() {
  const state = reactive<DownloadState>({ phase: 'idle', received: 0, expected: 0, files: 0, message: null })
  const fraction = computed(() => (state.phase === 'done' ? 1 : state.expected > 0 ? Math.min(0.99, state.received / state.expected) : 0))

  async function start(url: string, filename: string) {
    Object.assign(state, { phase: 'loading', received: 0, expected: 0, files: 0, message: null })
    try {
      const r = await fetch(url, { credentials: 'same-origin' })
      if (!r.ok || !r.body) {
        const problem = await r.json().catch(() => null)
        throw new Error(problem?.detail ?? `The download failed (${r.status}).`)
      }
      state.files = Number(r.headers.get('x-tercet-files') ?? 0)
      state.expected = Number(r.headers.get('x-tercet-expected-bytes') ?? 0)
      const reader = r.body.getReader()
      const parts: Uint8Array[] = []
      for (;;) {
        const { done, value } = await reader.read()
        if (done) break
        parts.push(value)
        state.received += value.byteLength
      }
      saveBlob(new Blob(parts as BlobPart[], { type: r.headers.get('content-type') ?? 'application/octet-stream' }), filename)
      state.phase = 'done'
    } catch (e) {
      state.phase = 'error'
      state.message = e instanceof Error ? e.message : String(e)
    }
  }
  return { state, fraction, start }
}

