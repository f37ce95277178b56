// The limit editor of a draft revision: text cells, parsed and checked with the same rules the server applies on save.
import type { Ref } from 'vue'
import { expectedUnit, qualifierKind } from '#shared/utils/measurement-names'
import { validateSpecLimits, type LimitRule, type SpecLimitRow } from '#shared/utils/spec-limits'

export type EditRow = { uid: number; step: string; name: string; qualifier: string; lsl: string; usl: string; target: string; unit: string; required: boolean; rule: LimitRule; defaultUncertainty: string; key: boolean }

export const FIELD_LABEL: Record<string, string> = { step: 'Step', name: 'Name', qualifier: 'Offset / harmonic', lsl: 'LSL', usl: 'USL', target: 'Target', unit: 'Unit', rule: 'Rule', defaultUncertainty: 'Default U', key: 'Key' }

export function useLimitEditor(revisionId: Ref<number>, saved: Ref<SpecLimitRow[] | undefined>, steps: Ref<string[]>, refresh: () => Promise<unknown>) {
  let uid = 0
  const SCALE: Record<string, number> = { '': 1, k: 1e3, m: 1e6, g: 1e9 }
  function qualifierText(l: SpecLimitRow): string {
    if (!l.qualifier) return ''
    if (qualifierKind(l.name) !== 'offsetHz') return String(l.qualifier)
    for (const [suffix, scale] of [['G', 1e9], ['M', 1e6], ['k', 1e3]] as const) {
      if (l.qualifier >= scale && Number.isInteger(l.qualifier / scale * 1000)) return `${l.qualifier / scale}${suffix}`
    }
    return String(l.qualifier)
  }
  const text = (v: number | null) => (v == null ? '' : String(v))
  function toRow(l: SpecLimitRow): EditRow {
    return { uid: ++uid, step: l.step, name: l.name, qualifier: qualifierText(l), lsl: text(l.lsl), usl: text(l.usl), target: text(l.target), unit: l.unit, required: l.required, rule: l.rule, defaultUncertainty: text(l.defaultUncertainty), key: l.key }
  }
  const num = (s: string) => (s.trim() === '' ? null : Number(s.trim()))
  function parseQualifier(s: string): number | null {
    const m = s.trim().match(/^([0-9.]+(?:e[+-]?\d+)?)\s*([kKmMgG]?)(?:hz|Hz)?$/)
    if (!s.trim()) return null
    return m ? Number(m[1]) * SCALE[m[2]!.toLowerCase()]! : Number.NaN
  }
  function toLimit(r: EditRow): SpecLimitRow {
    return {
      step: r.step, name: r.name.trim(), qualifier: parseQualifier(r.qualifier) ?? 0, lsl: num(r.lsl), usl: num(r.usl), target: num(r.target),
      unit: r.unit.trim(), required: r.required, rule: r.rule, defaultUncertainty: num(r.defaultUncertainty), key: r.key,
    }
  }

  const rows = ref<EditRow[]>([])
  const serverErrors = ref<{ pointer: string; message: string }[]>([])
  watch(saved, (limits) => { rows.value = (limits ?? []).map(toRow); serverErrors.value = [] }, { immediate: true })
  const parsed = computed(() => rows.value.map(toLimit))
  const dirty = computed(() => JSON.stringify(parsed.value) !== JSON.stringify(saved.value ?? []))
  const liveErrors = computed(() => validateSpecLimits(parsed.value, steps.value))
  const errors = computed(() => (dirty.value || !serverErrors.value.length ? liveErrors.value : serverErrors.value))
  const cellError = computed(() => {
    const out: Record<string, string> = {}
    for (const e of errors.value) { const [, , i, f] = e.pointer.split('/'); out[`${i}/${f}`] ??= e.message }
    return out
  })
  const errorList = computed(() => errors.value.map((e) => { const [, , i, f] = e.pointer.split('/'); return `Row ${Number(i) + 1} · ${FIELD_LABEL[f ?? ''] ?? f}: ${e.message}` }))

  function onName(r: EditRow) {
    const unit = expectedUnit(r.name.trim())
    if (unit) r.unit = unit
    if (!qualifierKind(r.name.trim())) r.qualifier = ''
  }
  function addRow() {
    rows.value.push({ uid: ++uid, step: steps.value.at(-1) ?? '', name: '', qualifier: '', lsl: '', usl: '', target: '', unit: '', required: true, rule: 'simple', defaultUncertainty: '', key: false })
  }
  const saving = ref(false)
  const saveMessage = ref<string | null>(null)
  async function save() {
    saving.value = true
    saveMessage.value = null
    try {
      await $fetch(`/api/revisions/${revisionId.value}/limits`, { method: 'PUT', body: { limits: parsed.value } })
      await refresh()
      saveMessage.value = 'Saved.'
    } catch (e: any) {
      serverErrors.value = e?.data?.errors ?? []
      saveMessage.value = e?.data?.detail ?? 'Could not save.'
    } finally {
      saving.value = false
    }
  }
  return { rows, parsed, dirty, liveErrors, cellError, errorList, onName, addRow, saving, saveMessage, save }
}

export type LimitEditor = ReturnType<typeof useLimitEditor>
