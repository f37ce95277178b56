// The two populations of the parameter rows: plausible first attempts (the rows' main sums) and every plausible
// attempt (their a-prefixed sums). Readers pick one and merge the station rows as usual.
import type { ParamStatsRow } from '../../database/repositories/lot-stats'
import type { LotBacklog } from '../ingest/fold-backlog'
import type { Population, StatsBacklog } from '../../../shared/types/capability'
import { ALL_ATTEMPT_FIELDS } from '../ingest/param-stats-merge'

/** The rows with the chosen population's sums in the main fields (failures count every attempt in both). */
export function inPopulation<R extends ParamStatsRow>(rows: R[], population: Population): R[] {
  if (population === 'first') return rows
  const fields = Object.entries(ALL_ATTEMPT_FIELDS) as [string, keyof R][]
  return rows.map((r) => ({ ...r, ...Object.fromEntries(fields.map(([main, a]) => [main, r[a]])) }))
}

/** What a view's figures do not include yet, null when they include everything stored before the reader asked. */
export function statsBacklog(b: LotBacklog | undefined): StatsBacklog | null {
  if (!b || (!b.runs && !b.rebuilds && !b.repairs)) return null
  return { asOf: b.asOf.toISOString(), runs: b.runs, rebuilds: b.rebuilds, repairs: b.repairs }
}
