// What the parameter view reads from the aggregates instead of the measurements: moments per revision (station rows
// merged with Chan's merge, either population) and the drift sums in test order.
import type { Knex } from 'knex'
import type { CentredSums } from '../../../shared/utils/regression'
import type { Population, StatsBacklog } from '../../../shared/types/capability'
import { paramStatsOfParameter } from '../../database/repositories/lot-stats'
import { repairQueued, trendRowsOfParameter } from '../../database/repositories/param-trend'
import type { RevisionMoments } from '../../database/repositories/parameter-values'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { centredTrendSums } from '../ingest/param-trend-merge'
import { mergeStationRows } from './lot-summary'
import { inPopulation, statsBacklog } from './param-populations'

type Parameter = { lotId: number; step: string; name: string; qualifier: number }

/** Count, mean, sample sd and range of one parameter per revision judged, after a bounded fold of the lot's queue. */
export async function parameterMoments(db: Knex, k: Parameter, population: Population): Promise<{ groups: RevisionMoments[]; backlog: StatsBacklog | null }> {
  const [backlog] = await freshenLotStats(db, [k.lotId])
  const rows = inPopulation(await paramStatsOfParameter(db, k.lotId, k), population)
  const groups = mergeStationRows(rows).map((g) => ({
    revisionId: g.revisionId, n: g.n, mean: g.mean, sd: g.sd, min: g.n > 0 ? g.min : null, max: g.n > 0 ? g.max : null,
  }))
  return { groups, backlog: statsBacklog(backlog) }
}

/**
 * The regression sums of value against rank in test order for one revision, or `pending` while a late value's
 * repair is queued (Σ rank·value is wrong until the background fold takes it again).
 */
export async function parameterDriftSums(db: Knex, k: Parameter & { revisionId: number }, population: Population): Promise<{ sums: CentredSums | null; pending: boolean }> {
  const [rows, queued] = await Promise.all([trendRowsOfParameter(db, k), repairQueued(db, k)])
  const row = rows.find((r) => r.revisionId === k.revisionId && r.allAttempts === (population === 'all'))
  if (!row) return { sums: null, pending: false }
  if (row.stale || queued) return { sums: null, pending: true }
  return { sums: centredTrendSums(row), pending: false }
}
