// The checks of a rule's fields that need no database: which fields its kind needs or refuses, and their ranges.
import type { AlertRuleInput } from '../../../shared/types/alert'
import { ALERT_KIND_INFO, type AlertKind, type AlertRuleField } from '../../../shared/utils/alert-kinds'
import type { FieldError } from '../../../shared/types/problem'

type Key = Exclude<keyof AlertRuleInput, 'name' | 'kind' | 'enabled'>

/** The body keys that carry each field of a rule; the first is the one a required field must have. */
export const FIELD_KEYS: Record<AlertRuleField, readonly Key[]> = {
  product: ['partNumber'],
  station: ['stationId'],
  step: ['step'],
  parameter: ['parameter', 'qualifier'],
  threshold: ['threshold'],
  windowUnits: ['windowUnits'],
  horizonUnits: ['horizonUnits'],
  silentMinutes: ['silentMinutes'],
  controlRules: ['controlRules'],
}

const given = (v: unknown) => v !== null && v !== undefined

export function usedFields(kind: AlertKind): Set<AlertRuleField> {
  const info = ALERT_KIND_INFO[kind]
  return new Set([...info.required, ...info.optional])
}

/** The same input with every field its kind does not use set to null (what a change of kind does to the stored rule). */
export function clearUnused(input: AlertRuleInput): AlertRuleInput {
  const used = usedFields(input.kind)
  const out: AlertRuleInput = { ...input }
  for (const [field, keys] of Object.entries(FIELD_KEYS) as [AlertRuleField, readonly Key[]][]) {
    if (!used.has(field)) for (const k of keys) (out as Record<string, unknown>)[k] = null
  }
  return out
}

const THRESHOLD: Partial<Record<AlertKind, { ok: (x: number) => boolean; message: string }>> = {
  yield_low: { ok: (x) => x > 0 && x <= 100, message: 'must be a yield in % above 0 and at most 100' },
  cpk_low: { ok: (x) => x > 0, message: 'must be a Cpk above 0' },
  station_bias: { ok: (x) => x > 0, message: "must be a difference above 0, in the parameter's unit" },
}

function inRange(errors: FieldError[], key: Key, v: number | null | undefined, lo: number, hi: number, what: string) {
  if (given(v) && !(Number.isInteger(v) && v! >= lo && v! <= hi)) errors.push({ pointer: `/${key}`, message: `must be a whole number of ${what} from ${lo} to ${hi}` })
}

/**
 * Every field the kind needs is given, no field it does not use carries a value (null counts as not given), and the
 * figures are in range. Errors point at the body's keys.
 */
export function checkRuleFields(input: AlertRuleInput): FieldError[] {
  const errors: FieldError[] = []
  const info = ALERT_KIND_INFO[input.kind]
  const used = usedFields(input.kind)
  const values = input as Record<string, unknown>
  for (const field of info.required) {
    const key = FIELD_KEYS[field][0]!
    if (!given(values[key])) errors.push({ pointer: `/${key}`, message: `is required for a rule of kind "${info.label}"` })
  }
  for (const [field, keys] of Object.entries(FIELD_KEYS) as [AlertRuleField, readonly Key[]][]) {
    if (used.has(field)) continue
    for (const k of keys) if (given(values[k])) errors.push({ pointer: `/${k}`, message: `is not used by a rule of kind "${info.label}"; leave it out` })
  }
  if (!input.name?.trim()) errors.push({ pointer: '/name', message: 'is required' })
  inRange(errors, 'windowUnits', input.windowUnits, 2, 10_000, 'units')
  inRange(errors, 'horizonUnits', input.horizonUnits, 1, 10_000, 'units')
  inRange(errors, 'silentMinutes', input.silentMinutes, 1, 43_200, 'minutes')
  const t = THRESHOLD[input.kind]
  if (t && given(input.threshold) && !(Number.isFinite(input.threshold) && t.ok(input.threshold!))) errors.push({ pointer: '/threshold', message: t.message })
  if (given(input.controlRules)) {
    const rules = input.controlRules!
    if (!rules.length) errors.push({ pointer: '/controlRules', message: 'must name at least one of the rules 1 to 4' })
    rules.forEach((r, i) => {
      if (!(Number.isInteger(r) && r >= 1 && r <= 4)) errors.push({ pointer: `/controlRules/${i}`, message: 'must be a Western Electric rule from 1 to 4' })
      else if (rules.indexOf(r) !== i) errors.push({ pointer: `/controlRules/${i}`, message: 'is named twice' })
    })
  }
  return errors
}
