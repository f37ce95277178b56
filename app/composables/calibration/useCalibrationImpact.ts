import type { ImpactDecisionsResult, ImpactDetail, ImpactNoticesResult } from '#shared/types/calibration-impact'
import type { ImpactDecision } from '#shared/utils/calibration-impact'
import { useSignedPost } from '~/composables/signing/useSignedPost'

export type UnitRef = { partNumber: string; serial: string }

/** One review: its detail (one page of units, optionally one lot) and the actions on it. */
export function useCalibrationImpact(id: () => number) {
  const page = ref(1)
  const lot = ref('')
  const query = computed(() => ({ page: page.value, pageSize: 100, lot: lot.value || undefined }))
  const detail = useFetch<ImpactDetail | null>(() => `/api/calibration-impacts/${id()}`, { query, default: () => null })
  const signer = useSignedPost()
  const base = () => `/api/calibration-impacts/${id()}`
  const after = async <T>(p: Promise<T>) => { const r = await p; await detail.refresh(); return r }
  watch(lot, () => { page.value = 1 })
  return {
    ...detail, page, lot, signer,
    decideUnits: (units: UnitRef[], decision: ImpactDecision, reason: string) =>
      after($fetch<ImpactDecisionsResult>(`${base()}/decisions`, { method: 'POST', body: { decisions: units.map((u) => ({ ...u, decision, ...(reason ? { reason } : {}) })) } })),
    decideLot: (code: string, decision: ImpactDecision, reason: string) =>
      after($fetch<ImpactDecisionsResult>(`${base()}/decisions`, { method: 'POST', body: { lot: code, decision, ...(reason ? { reason } : {}) } })),
    sendNotices: (resend: boolean) => after(signer.post<ImpactNoticesResult>(`${base()}/notices`, resend ? { resend } : {})),
    close: () => after($fetch(`${base()}/close`, { method: 'POST', body: {} })),
  }
}

export type ImpactHandle = ReturnType<typeof useCalibrationImpact>
