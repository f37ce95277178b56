import type { ImportFormat } from '#shared/types/imports'

export type UploadAnswer = { status: number; body: any }
export type UploadEvents = { progress: (loaded: number, total: number) => void; received: () => void }

/** The raw file as the request body; XMLHttpRequest, because fetch reports no upload progress. */
export function sendImportFile(f: File, station: string, format: ImportFormat, on: UploadEvents): Promise<UploadAnswer> {
  const q = new URLSearchParams({ station, format, fileName: f.name })
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest()
    xhr.open('POST', `/api/imports?${q}`)
    xhr.setRequestHeader('Content-Type', format === 'csv' ? 'text/csv' : 'application/x-ndjson')
    xhr.setRequestHeader('Accept', 'application/json')
    xhr.upload.onprogress = (e) => on.progress(e.loaded, e.lengthComputable ? e.total : f.size)
    xhr.upload.onload = () => on.received()
    xhr.onload = () => {
      let body: any = null
      try { body = JSON.parse(xhr.responseText) } catch { /* not JSON */ }
      resolve({ status: xhr.status, body })
    }
    xhr.onerror = () => reject(new Error('The connection to the server was lost during the upload.'))
    xhr.send(f)
  })
}
