// What an audit entry changed: its before and after flattened to field paths and compared leaf by leaf.

export type FieldChange = { path: string; before: unknown; after: unknown; change: 'added' | 'removed' | 'changed' | 'same' }

const MAX_DEPTH = 4

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v)
}

/** Leaves of a value by path (`limits.2.usl`); arrays of plain values and anything deeper than MAX_DEPTH stay whole. */
function leaves(v: unknown, path: string, depth: number, out: Map<string, unknown>): void {
  const nested = isPlainObject(v) ? Object.entries(v)
    : Array.isArray(v) && v.some((x) => typeof x === 'object' && x !== null) ? v.map((x, i) => [String(i), x] as const)
      : null
  if (nested === null || depth >= MAX_DEPTH || nested.length === 0) { if (path) out.set(path, v); return }
  for (const [k, x] of nested) leaves(x, path ? `${path}.${k}` : k, depth + 1, out)
}

const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b)

/**
 * Every field of before and after with what happened to it, in the order the fields first appear (after's order
 * for fields only it has). A value that is not an object on either side is compared as one field named "value".
 */
export function auditChanges(before: unknown, after: unknown): FieldChange[] {
  const b = new Map<string, unknown>()
  const a = new Map<string, unknown>()
  if (before != null) leaves(isPlainObject(before) || Array.isArray(before) ? before : { value: before }, '', 0, b)
  if (after != null) leaves(isPlainObject(after) || Array.isArray(after) ? after : { value: after }, '', 0, a)
  const paths = [...new Set([...b.keys(), ...a.keys()])]
  return paths.map((path) => {
    const inB = b.has(path)
    const inA = a.has(path)
    const change = !inB ? 'added' : !inA ? 'removed' : same(b.get(path), a.get(path)) ? 'same' : 'changed'
    return { path, before: b.get(path), after: a.get(path), change }
  })
}
