import { CsvSyntaxError, csvUnescapeCell, parseCsvRecords, toCsvDocument } from './csv'
import { expectedUnit, formatQualifier, isValidMeasurementName, qualifierKind } from './measurement-names'

export type LimitRule = 'simple' | 'guarded'

/** One limit of a specification revision as the API and the editor carry it. */
export interface SpecLimitRow {
  step: string
  name: string
  /** Offset in Hz (phase_noise), harmonic number (harmonic_rejection), 0 for names without a qualifier. */
  qualifier: number
  lsl: number | null
  usl: number | null
  target: number | null
  unit: string
  required: boolean
  rule: LimitRule
  defaultUncertainty: number | null
  key: boolean
}

export type LimitFieldError = { pointer: string; message: string }

export const LIMIT_FIELDS = ['step', 'name', 'qualifier', 'lsl', 'usl', 'target', 'unit', 'required', 'rule', 'defaultUncertainty', 'key'] as const
export type LimitField = (typeof LIMIT_FIELDS)[number]

export function specLimitKey(l: Pick<SpecLimitRow, 'step' | 'name' | 'qualifier'>): string {
  return `${l.step}\u0000${l.name}\u0000${l.qualifier ?? 0}`
}

export function describeLimit(l: Pick<SpecLimitRow, 'step' | 'name' | 'qualifier'>): string {
  const q = l.qualifier ? formatQualifier(l.name, l.qualifier) || String(l.qualifier) : ''
  return `${l.step} · ${l.name}${q ? ` @ ${q}` : ''}`
}

function isNum(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v)
}

/** Checks one row; `at` is its JSON pointer, e.g. "/limits/3". Values that are not finite numbers count as invalid. */
export function validateSpecLimit(l: Partial<Record<LimitField, unknown>>, steps: readonly string[], at: string): LimitFieldError[] {
  const errors: LimitFieldError[] = []
  const err = (field: LimitField, message: string) => errors.push({ pointer: `${at}/${field}`, message })
  const name = typeof l.name === 'string' ? l.name : ''
  if (typeof l.step !== 'string' || !l.step) err('step', 'is required')
  else if (!steps.includes(l.step)) err('step', `must be one of this product's steps (${steps.join(', ')})`)

  if (!name) err('name', 'is required')
  else if (!isValidMeasurementName(name)) err('name', 'must start with a letter and use only a–z, 0–9 and _ (2–48 characters)')

  const unit = typeof l.unit === 'string' ? l.unit.trim() : ''
  const expected = name ? expectedUnit(name) : null
  if (!unit) err('unit', 'is required')
  else if (expected && unit !== expected) err('unit', `must be ${expected} for ${name}`)
  else if (unit.length > 16) err('unit', 'must be at most 16 characters')

  const kind = name ? qualifierKind(name) : null
  const q = l.qualifier
  if (kind === 'offsetHz') {
    if (!isNum(q) || q <= 0) err('qualifier', 'must be a positive offset in Hz')
  } else if (kind === 'harmonic') {
    if (!isNum(q) || !Number.isInteger(q) || q < 1) err('qualifier', 'must be a whole harmonic number ≥ 1')
  } else if (q != null && q !== 0) {
    err('qualifier', `must be empty: ${name || 'this measurement'} takes no qualifier`)
  }

  for (const f of ['lsl', 'usl', 'target', 'defaultUncertainty'] as const) {
    if (l[f] != null && !isNum(l[f])) err(f, 'must be a number')
  }
  const lsl = isNum(l.lsl) ? l.lsl : null
  const usl = isNum(l.usl) ? l.usl : null
  if (l.lsl == null && l.usl == null) err('usl', 'set an LSL, a USL or both')
  if (lsl != null && usl != null && !(lsl < usl)) err('usl', `must be above the LSL (${lsl})`)
  if (isNum(l.target) && ((lsl != null && l.target < lsl) || (usl != null && l.target > usl))) err('target', 'must lie within the limits')
  if (isNum(l.defaultUncertainty)) {
    if (l.defaultUncertainty < 0) err('defaultUncertainty', 'must be ≥ 0')
    else if (l.rule === 'guarded' && lsl != null && usl != null && lsl < usl && 2 * l.defaultUncertainty >= usl - lsl) {
      err('defaultUncertainty', 'leaves no acceptance zone between the guard bands')
    }
  }
  if (l.rule != null && l.rule !== 'simple' && l.rule !== 'guarded') err('rule', 'must be simple or guarded')
  return errors
}

/**
 * Checks a whole limit table: every row, and no two rows for the same step, name and qualifier.
 * `firstRow` is the number a reader sees on the first row (2 in a CSV file below its header).
 */
export function validateSpecLimits(limits: readonly Partial<Record<LimitField, unknown>>[], steps: readonly string[], base = '/limits', firstRow = 1): LimitFieldError[] {
  const errors: LimitFieldError[] = []
  const seen = new Map<string, number>()
  limits.forEach((l, i) => {
    errors.push(...validateSpecLimit(l, steps, `${base}/${i}`))
    if (typeof l.step !== 'string' || typeof l.name !== 'string') return
    const key = specLimitKey({ step: l.step, name: l.name, qualifier: typeof l.qualifier === 'number' ? l.qualifier : 0 })
    const first = seen.get(key)
    if (first === undefined) seen.set(key, i)
    else errors.push({ pointer: `${base}/${i}/${qualifierKind(l.name) ? 'qualifier' : 'name'}`, message: `repeats row ${first + firstRow} (same step, name and qualifier)` })
  })
  return errors
}

/** Fills what may be left out: qualifier 0, unset limits null, required on, simple rule, not a key characteristic. */
export function normalizeSpecLimit(l: Partial<SpecLimitRow> & Pick<SpecLimitRow, 'step' | 'name' | 'unit'>): SpecLimitRow {
  return {
    step: l.step, name: l.name, qualifier: l.qualifier ?? 0, lsl: l.lsl ?? null, usl: l.usl ?? null, target: l.target ?? null,
    unit: l.unit.trim(), required: l.required ?? true, rule: l.rule ?? 'simple', defaultUncertainty: l.defaultUncertainty ?? null, key: l.key ?? false,
  }
}

export type LimitChange = { key: string; before: SpecLimitRow; after: SpecLimitRow; fields: LimitField[] }
export type LimitComparison = { added: SpecLimitRow[]; removed: SpecLimitRow[]; changed: LimitChange[]; unchanged: number }

/** What changes from revision a to revision b, matching limits by step, name and qualifier. */
export function compareSpecLimits(a: readonly SpecLimitRow[], b: readonly SpecLimitRow[]): LimitComparison {
  const before = new Map(a.map((l) => [specLimitKey(l), l]))
  const after = new Map(b.map((l) => [specLimitKey(l), l]))
  const out: LimitComparison = { added: [], removed: [], changed: [], unchanged: 0 }
  for (const [key, l] of after) {
    const old = before.get(key)
    if (!old) { out.added.push(l); continue }
    const fields = LIMIT_FIELDS.filter((f) => old[f] !== l[f])
    if (fields.length) out.changed.push({ key, before: old, after: l, fields })
    else out.unchanged += 1
  }
  for (const [key, l] of before) if (!after.has(key)) out.removed.push(l)
  return out
}

// CSV columns in file order, with the limit field each one fills.
export const LIMIT_CSV_COLUMNS: readonly [string, LimitField][] = [
  ['step', 'step'], ['name', 'name'], ['qualifier', 'qualifier'], ['lsl', 'lsl'], ['usl', 'usl'], ['target', 'target'],
  ['unit', 'unit'], ['required', 'required'], ['rule', 'rule'], ['default_uncertainty', 'defaultUncertainty'], ['key_characteristic', 'key'],
]
const REQUIRED_COLUMNS = ['step', 'name', 'unit']
const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/

export function specLimitsToCsv(limits: readonly SpecLimitRow[]): string {
  return toCsvDocument(LIMIT_CSV_COLUMNS.map(([c]) => c), limits.map((l) => LIMIT_CSV_COLUMNS.map(([, f]) => {
    const v = l[f]
    if (f === 'qualifier') return v === 0 ? '' : v
    if (typeof v === 'boolean') return v ? 'yes' : 'no'
    return v
  })))
}

export type CsvRowError = { row: number; column: string | null; pointer: string; message: string }
export type ParsedLimitCsv = { rows: { row: number; limit: SpecLimitRow }[]; errors: CsvRowError[] }

/**
 * Reads a limit table from CSV (header row first; rows are numbered as a spreadsheet shows them, the header being row 1)
 * and validates it as a whole. The limits are usable only when `errors` is empty.
 */
export function specLimitsFromCsv(text: string, steps: readonly string[]): ParsedLimitCsv {
  let records: string[][]
  try {
    records = parseCsvRecords(text)
  } catch (e) {
    const record = e instanceof CsvSyntaxError ? e.record : 1
    return { rows: [], errors: [{ row: record, column: null, pointer: record >= 2 ? `/limits/${record - 2}` : '', message: (e as Error).message }] }
  }
  const errors: CsvRowError[] = []
  const header = (records[0] ?? []).map((h) => h.trim().toLowerCase())
  const columnOf = new Map(LIMIT_CSV_COLUMNS)
  header.forEach((h) => { if (!columnOf.has(h)) errors.push({ row: 1, column: h, pointer: '', message: `unknown column "${h}"` }) })
  for (const c of REQUIRED_COLUMNS) if (!header.includes(c)) errors.push({ row: 1, column: c, pointer: '', message: `the column "${c}" is missing` })
  if (new Set(header).size !== header.length) errors.push({ row: 1, column: null, pointer: '', message: 'a column appears twice' })
  if (errors.length) return { rows: [], errors }

  const rows: { row: number; limit: SpecLimitRow }[] = []
  const raw: Partial<Record<LimitField, unknown>>[] = []
  records.slice(1).forEach((record, i) => {
    const row = i + 2
    const cellErr = (column: string, field: LimitField, message: string) => errors.push({ row, column, pointer: `/limits/${i}/${field}`, message })
    if (record.length > header.length) errors.push({ row, column: null, pointer: `/limits/${i}`, message: `has ${record.length} cells, the header ${header.length}` })
    const values: Partial<Record<LimitField, unknown>> = {}
    header.forEach((column, c) => {
      const field = columnOf.get(column)!
      const cell = csvUnescapeCell((record[c] ?? '').trim())
      if (field === 'step' || field === 'name' || field === 'unit') values[field] = cell
      else if (field === 'rule') values.rule = cell === '' ? 'simple' : cell.toLowerCase()
      else if (field === 'required' || field === 'key') {
        const b = cell.toLowerCase()
        if (b === '') values[field] = field === 'required'
        else if (['yes', 'true', '1', 'y'].includes(b)) values[field] = true
        else if (['no', 'false', '0', 'n'].includes(b)) values[field] = false
        else cellErr(column, field, 'must be yes or no')
      } else if (cell === '') values[field] = field === 'qualifier' ? 0 : null
      else if (NUMBER.test(cell)) values[field] = Number(cell)
      else cellErr(column, field, 'must be a number')
    })
    raw.push(values)
    const limit = normalizeSpecLimit({ ...(values as Partial<SpecLimitRow>), step: String(values.step ?? ''), name: String(values.name ?? ''), unit: String(values.unit ?? '') })
    rows.push({ row, limit })
  })
  const checks = validateSpecLimits(raw.map((v, i) => ({ ...v, qualifier: v.qualifier ?? 0, rule: v.rule ?? 'simple', step: rows[i]!.limit.step, name: rows[i]!.limit.name, unit: rows[i]!.limit.unit })), steps, '/limits', 2)
  for (const e of checks) {
    const [, , index, field] = e.pointer.split('/')
    const i = Number(index)
    // a cell already reported as unreadable is not reported again
    if (errors.some((x) => x.pointer === e.pointer)) continue
    const column = LIMIT_CSV_COLUMNS.find(([, f]) => f === field)?.[0] ?? null
    errors.push({ row: i + 2, column, pointer: e.pointer, message: e.message })
  }
  errors.sort((a, b) => a.row - b.row)
  return { rows, errors }
}
