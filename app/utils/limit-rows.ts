// A limit as the editor's text cells hold it and back. Values are typed in the unit they are shown in (jitter in fs)
// and converted to the stored unit (s) here, once, so the editor, the save and the server's checks all see stored units.
import { qualifierKind } from '#shared/utils/measurement-names'
import type { LimitRule, SpecLimitRow } from '#shared/utils/spec-limits'
import { fromInputUnit, inputUnitFor, storedUnitFor, toInputUnit } from '#shared/utils/value-format'

export type EditRow = { uid: number; step: string; name: string; qualifier: string; lsl: string; usl: string; target: string; unit: string; required: boolean; rule: LimitRule; defaultUncertainty: string; key: boolean }

const SCALE: Record<string, number> = { '': 1, k: 1e3, m: 1e6, g: 1e9 }

function qualifierText(l: SpecLimitRow): string {
  if (!l.qualifier) return ''
  if (qualifierKind(l.name) !== 'offsetHz') return String(l.qualifier)
  for (const [suffix, scale] of [['G', 1e9], ['M', 1e6], ['k', 1e3]] as const) {
    if (l.qualifier >= scale && Number.isInteger(l.qualifier / scale * 1000)) return `${l.qualifier / scale}${suffix}`
  }
  return String(l.qualifier)
}

export function parseQualifier(s: string): number | null {
  const m = s.trim().match(/^([0-9.]+(?:e[+-]?\d+)?)\s*([kKmMgG]?)(?:hz|Hz)?$/)
  if (!s.trim()) return null
  return m ? Number(m[1]) * SCALE[m[2]!.toLowerCase()]! : Number.NaN
}

/** A stored limit as editor cells, its values in the unit they are typed in. */
export function toEditRow(l: SpecLimitRow, uid: number): EditRow {
  const t = (v: number | null) => (v == null ? '' : String(toInputUnit(v, l.unit)))
  return {
    uid, step: l.step, name: l.name, qualifier: qualifierText(l), lsl: t(l.lsl), usl: t(l.usl), target: t(l.target), unit: inputUnitFor(l.unit).unit,
    required: l.required, rule: l.rule, defaultUncertainty: t(l.defaultUncertainty), key: l.key,
  }
}

const num = (s: string) => (s.trim() === '' ? null : Number(s.trim()))

/** Editor cells as the limit to store: the typed unit's values converted to the stored unit. */
export function fromEditRow(r: EditRow): SpecLimitRow {
  const unit = storedUnitFor(r.unit.trim())
  const v = (s: string) => fromInputUnit(num(s), unit)
  return {
    step: r.step, name: r.name.trim(), qualifier: parseQualifier(r.qualifier) ?? 0, lsl: v(r.lsl), usl: v(r.usl), target: v(r.target),
    unit, required: r.required, rule: r.rule, defaultUncertainty: v(r.defaultUncertainty), key: r.key,
  }
}
