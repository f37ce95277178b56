// One parameter compared across the stations that measured it: each station against the others pooled.
import type { Knex } from 'knex'
import { summaryFromMoments, welchTTest } from '../../../shared/utils/welch'
import { lotIdsOfProduct, lotRef } from '../../database/repositories/analytics-params'
import { RuleError } from '../rule-error'
import { resolveSeries, type SeriesQuery } from './series-query'
import { freshParamRows } from './trends'
import { emptyPooled, poolBy, poolMerge, poolRows, summarise, type PooledStats } from './station-rows'

import type { StationComparisonRow, StationComparisonView } from '../../../shared/types/capability'

export type StationComparison = StationComparisonRow

/**
 * Bias against the pooled mean and Welch's test against all other stations pooled. The largest |bias| among the
 * stations that could be tested is flagged: one value far from the rest says nothing about its station.
 */
export function compareStations(byStation: { station: string; stats: PooledStats }[]): { pooled: ReturnType<typeof summarise>; stations: StationComparison[] } {
  const all = byStation.reduce((acc, s) => poolMerge(acc, s.stats), emptyPooled())
  const pooled = summarise(all)
  const stations = byStation.map(({ station, stats }, i) => {
    const s = summarise(stats)
    const rest = byStation.reduce((acc, o, j) => (j === i ? acc : poolMerge(acc, o.stats)), emptyPooled())
    const w = stats.moments.n > 0 && rest.moments.n > 0 ? welchTTest(summaryFromMoments(stats.moments), summaryFromMoments(rest.moments)) : null
    return {
      station, n: s.n, mean: s.mean, sigma: s.sigmaOverall, sigmaWithin: s.sigmaWithin, min: s.min, max: s.max,
      bias: s.mean !== null && pooled.mean !== null ? s.mean - pooled.mean : null,
      welch: w ? { t: w.t, df: w.df, p: w.p } : null,
      largestBias: false,
    }
  })
  // Two stations with equal counts sit equally far from the pooled mean: a tie flags nobody rather than the first name.
  const sizes = stations.map((s) => (s.bias === null || s.welch === null ? -1 : Math.abs(s.bias)))
  const top = Math.max(-1, ...sizes)
  const leaders = sizes.filter((b) => b >= 0 && top - b <= 1e-12 * Math.max(1, top))
  if (stations.length >= 2 && top >= 0 && leaders.length === 1) stations[sizes.indexOf(top)]!.largestBias = true
  return { pooled, stations }
}

export async function stationComparison(db: Knex, { series: q, lotCode, includeEngineering = false }: { series: SeriesQuery; lotCode: string | null; includeEngineering?: boolean }, now = new Date()): Promise<StationComparisonView> {
  const series = await resolveSeries(db, q, now)
  let lotIds: number[]
  if (lotCode !== null) {
    const lot = await lotRef(db, lotCode)
    if (!lot) throw new RuleError(404, `No lot ${lotCode}.`)
    if (lot.productId !== series.product.id) throw new RuleError(400, `Lot ${lotCode} is not a lot of ${series.product.partNumber}.`, [{ pointer: '/lot', message: 'belongs to another part' }])
    lotIds = [lot.id]
  } else {
    // a lot named is compared whatever its kind; across lots, engineering lots only when asked for
    lotIds = await lotIdsOfProduct(db, series.product.id, includeEngineering)
  }
  const rows = await freshParamRows(db, lotIds, { step: series.step, name: q.name, qualifier: q.qualifier })
  const names = new Map(rows.map((r) => [r.stationId, r.stationName]))
  const grouped = [...poolBy(rows, (r) => r.stationId)]
    .map(([id, stats]) => ({ station: names.get(id)!, stats }))
    .filter((s) => s.stats.moments.n > 0)
    .sort((a, b) => a.station.localeCompare(b.station))
  const { pooled, stations } = compareStations(grouped)
  return {
    part: { partNumber: series.product.partNumber, name: series.product.name, steps: series.product.steps },
    parameter: series.parameter,
    lot: lotCode,
    engineering: includeEngineering ? 'include' as const : 'exclude' as const,
    pooled: { ...pooled, outOfSpec: poolRows(rows).outOfSpec },
    stations,
  }
}
