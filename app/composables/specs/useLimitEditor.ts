// The limit editor of a draft revision: text cells (limit-rows.ts), parsed and checked with the same rules the server applies on save.
import type { Ref } from 'vue'
import { expectedUnit, qualifierKind } from '#shared/utils/measurement-names'
import { validateSpecLimits, type SpecLimitRow } from '#shared/utils/spec-limits'
import { inputUnitFor } from '#shared/utils/value-format'
import { fromEditRow, toEditRow, type EditRow } from '~/utils/limit-rows'

export type { EditRow }

export const FIELD_LABEL: Record<string, string> = { step: 'Step', name: 'Name', qualifier: 'Offset / harmonic', lsl: 'LSL', usl: 'USL', target: 'Target', unit: 'Unit', rule: 'Rule', defaultUncertainty: 'Default U', key: 'Key' }

export function useLimitEditor(revisionId: Ref<number>, saved: Ref<SpecLimitRow[] | undefined>, steps: Ref<string[]>, refresh: () => Promise<unknown>) {
  let uid = 0
  const toRow = (l: SpecLimitRow) => toEditRow(l, ++uid)
  const toLimit = fromEditRow

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
    if (unit) r.unit = inputUnitFor(unit).unit
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
