import { createHash } from 'node:crypto'

function keysInOrder(o: object): boolean {
  const keys = Object.keys(o)
  for (let i = 1; i < keys.length; i++) if (keys[i - 1]! > keys[i]!) return false
  return true
}

/** Objects with their keys in sorted order (the same object when they already are). */
function sortedKeys(_key: string, value: unknown): unknown {
  if (!value || typeof value !== 'object' || Array.isArray(value) || keysInOrder(value)) return value
  const out: Record<string, unknown> = {}
  for (const k of Object.keys(value).sort()) out[k] = (value as Record<string, unknown>)[k]
  return out
}

/**
 * JSON with sorted keys, so a replay that only reorders keys still counts as the same body. The engine's own
 * stringify does the writing (every posted run is hashed, with a few hundred values in it); it lists integer-like
 * keys first whatever their insertion order, which no validated run has.
 */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, sortedKeys)
}

export function bodyHash(value: unknown): string {
  return createHash('sha256').update(canonicalJson(value)).digest('hex')
}
