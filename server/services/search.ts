// The header's type-ahead: serials, lots and parts starting with what was typed, a few of each.
import type { Knex } from 'knex'
import { lotsByPrefix, partsByPrefix, unitsByPrefix } from '../database/repositories/search'
import type { SearchGroup, SearchResults } from '../../shared/types/search'

export const SEARCH_LIMIT = 8

function group<T>(rows: T[]): SearchGroup<T> {
  return { items: rows.slice(0, SEARCH_LIMIT), more: rows.length > SEARCH_LIMIT }
}

/** Prefix matches (the identifiers' own indexes; letters match regardless of case), at most SEARCH_LIMIT per group. */
export async function search(db: Knex, q: string): Promise<SearchResults> {
  // one more than shown says whether there are more
  const [units, lots, parts] = await Promise.all([
    unitsByPrefix(db, q, SEARCH_LIMIT + 1), lotsByPrefix(db, q, SEARCH_LIMIT + 1), partsByPrefix(db, q, SEARCH_LIMIT + 1),
  ])
  return { q, units: group(units), lots: group(lots), parts: group(parts) }
}
