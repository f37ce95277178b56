import type { ShipmentDetail } from '#shared/types/shipment'
import { useSignedPost } from '~/composables/signing/useSignedPost'

export function useShipment(id: () => number) {
  const page = ref(1)
  const detail = useFetch<ShipmentDetail | null>(() => `/api/shipments/${id()}`, { query: computed(() => ({ page: page.value, pageSize: 200 })), default: () => null })
  const signer = useSignedPost()
  const base = () => `/api/shipments/${id()}`
  const after = async <T>(p: Promise<T>) => { const r = await p; await detail.refresh(); return r }
  return {
    ...detail, page, signer,
    addLines: (lines: string[]) => after($fetch(`${base()}/serials`, { method: 'POST', body: { lines } })),
    addLot: (lot: string) => after($fetch<{ added: number }>(`${base()}/serials`, { method: 'POST', body: { lot } })),
    previewLot: (lot: string) => $fetch<{ rows: any[]; addable: number }>(`${base()}/serials/preview`, { method: 'POST', body: { lot } }),
    remove: (units: { partNumber: string; serial: string }[]) => after($fetch(`${base()}/serials`, { method: 'DELETE', body: { units } })),
    release: (deviation?: string) => after(signer.post(`${base()}/release`, deviation ? { deviation } : {})),
    dispatch: (carrier: string, trackingRef: string) => after($fetch(`${base()}/dispatch`, { method: 'POST', body: { carrier, trackingRef } })),
    recordReturn: (body: Record<string, string>) => after($fetch(`${base()}/returns`, { method: 'POST', body })),
    revoke: (number: string, reason: string) => after(signer.post(`/api/certificates/${encodeURIComponent(number)}/revoke`, { reason })),
    reissue: (number: string) => after(signer.post(`/api/certificates/${encodeURIComponent(number)}/reissue`, {})),
  }
}

/** The server's refusal in one line. */
export function problemText(e: any, fallback = 'Refused.'): string {
  const d = e?.data
  return [d?.detail, ...(d?.errors ?? []).slice(0, 5).map((x: any) => `${x.pointer ? x.pointer + ': ' : ''}${x.message}`)].filter(Boolean).join(' — ') || fallback
}
