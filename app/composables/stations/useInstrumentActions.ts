import type { CalibrationAdded, CalibrationSuperseded, HoldingCorrected, InstrumentAdded, InstrumentMoved, RejudgeSummaryView } from '#shared/types/calibration'
import { pointerErrors } from '~/utils/station-format'

/**
 * The writes of the instrument forms. Each form gets its own instance: its busy flag, field errors (by JSON Pointer)
 * and a message saying what the change did to stored runs.
 */
export function useInstrumentActions(onDone: () => unknown) {
  const busy = ref(false)
  const errors = ref<Record<string, string>>({})
  const message = ref<{ ok: boolean; text: string } | null>(null)

  function describe(r: RejudgeSummaryView | null | undefined): string {
    if (!r) return 'Saved.'
    const moved = r.nowLapsed + r.nowInCalibration
    if (!moved) return `Saved. ${r.runs} stored run${r.runs === 1 ? '' : 's'} checked; no calibration flag changed.`
    return `Saved. ${r.nowLapsed} run${r.nowLapsed === 1 ? '' : 's'} now flagged, ${r.nowInCalibration} cleared (lots ${r.lots.join(', ')}).`
  }

  async function send<R>(url: string, method: 'POST' | 'PATCH', body: Record<string, unknown>, pick: (r: R) => RejudgeSummaryView | null): Promise<boolean> {
    busy.value = true
    errors.value = {}
    message.value = null
    try {
      const r = (await $fetch(url, { method, body })) as R
      message.value = { ok: true, text: describe(pick(r)) }
      await onDone()
      return true
    } catch (e: any) {
      errors.value = pointerErrors(e)
      message.value = { ok: false, text: e?.data?.detail ?? 'The change was refused.' }
      return false
    } finally {
      busy.value = false
    }
  }

  return {
    busy, errors, message,
    addInstrument: (body: Record<string, unknown>) => send<{ instrument: InstrumentAdded }>('/api/instruments', 'POST', body, (r) => r.instrument.rejudged),
    move: (instrumentId: number, body: { stationId: number | null; at?: string }) =>
      send<{ move: InstrumentMoved }>(`/api/instruments/${instrumentId}/moves`, 'POST', body, (r) => r.move.rejudged),
    correctHolding: (instrumentId: number, holdingId: number, body: { from: string; until: string | null }) =>
      send<{ holding: HoldingCorrected }>(`/api/instruments/${instrumentId}/holdings/${holdingId}`, 'PATCH', body, (r) => r.holding.rejudged),
    addRecord: (instrumentId: number, body: Record<string, unknown>) =>
      send<{ record: CalibrationAdded }>(`/api/instruments/${instrumentId}/calibrations`, 'POST', body, (r) => r.record.rejudged),
    supersede: (recordId: number, body: { reason: string; effectiveFrom?: string }) =>
      send<{ record: CalibrationSuperseded }>(`/api/calibrations/${recordId}/supersede`, 'POST', body, (r) => r.record.rejudged),
  }
}
