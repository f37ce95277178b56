import type { Validator } from './run-validator'

const MESSAGE = 'must be a date (YYYY-MM-DD) or a date-time with a time zone'

/**
 * A field that takes a date or a date-time fails a schema's `anyOf` three ways at once; forms need one message per
 * field. Collapses the errors at pointers ending in one of `fields` into that one message.
 */
export function oneMessagePerDateField<T>(validate: Validator<T>, fields: readonly string[]): Validator<T> {
  return (body) => {
    const r = validate(body)
    if (r.ok) return r
    const isDate = (p: string) => fields.some((f) => p.endsWith(`/${f}`))
    const dates = new Set(r.errors.filter((e) => isDate(e.pointer) && e.message !== 'is required').map((e) => e.pointer))
    return { ok: false, errors: [...r.errors.filter((e) => !dates.has(e.pointer)), ...[...dates].map((pointer) => ({ pointer, message: MESSAGE }))] }
  }
}
