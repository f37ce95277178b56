import { createHash } from 'node:crypto'

/** JSON with sorted keys, so a replay that only reorders keys still counts as the same body. */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return '[' + value.map(canonicalJson).join(',') + ']'
  if (value && typeof value === 'object') {
    return '{' + Object.keys(value).sort().filter((k) => (value as any)[k] !== undefined)
      .map((k) => JSON.stringify(k) + ':' + canonicalJson((value as any)[k])).join(',') + '}'
  }
  return JSON.stringify(value)
}

export function bodyHash(value: unknown): string {
  return createHash('sha256').update(canonicalJson(value)).digest('hex')
}
