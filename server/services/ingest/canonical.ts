import { createHash } from 'node:crypto'

/** JSON with sorted keys, so a replay that only reorders keys still counts as the same body. */
export function canonicalJson(value: unknown): string {
  // string building in loops: every posted run is hashed, with a few hundred values in it
  if (Array.isArray(value)) {
    let out = '['
    for (let i = 0; i < value.length; i++) out += (i ? ',' : '') + canonicalJson(value[i])
    return out + ']'
  }
  if (value && typeof value === 'object') {
    const keys = Object.keys(value).sort()
    let out = '{'
    let first = true
    for (const k of keys) {
      const v = (value as any)[k]
      if (v === undefined) continue
      out += (first ? '' : ',') + JSON.stringify(k) + ':' + canonicalJson(v)
      first = false
    }
    return out + '}'
  }
  return JSON.stringify(value)
}

export function bodyHash(value: unknown): string {
  return createHash('sha256').update(canonicalJson(value)).digest('hex')
}
