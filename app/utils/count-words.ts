import { formatCount } from '#shared/utils/value-format'

/** "1 row", "2 rows": a count with its noun; `many` for nouns that do not just take an s (1 entry, 2 entries). */
export function counted(n: number, one: string, many = `${one}s`): string {
  return `${formatCount(n)} ${n === 1 ? one : many}`
}
