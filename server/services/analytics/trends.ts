// One parameter of one part across its lots, from the lot × station aggregates only.
import type { Knex } from 'knex'
import { capabilityBand, capabilityIndices, capabilityIntervals } from '../../../shared/utils/capability'
import { individualsLimits, westernElectricHits } from '../../../shared/utils/control'
import { linearRegression } from '../../../shared/utils/regression'
import { lotsOfProduct, paramRowsForLots, type ParamKey, type StationStatRow } from '../../database/repositories/analytics-params'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { resolveSeries, type SeriesQuery } from './series-query'
import type { TrendCapability, TrendLot, TrendsView } from '../../../shared/types/capability'
import { byRevision, revisionBook, type RevisionBook } from './revision-limits'
import { poolBy, poolRows, summarise } from './station-rows'

/** The lots' rows of one parameter, with every stored run folded in first. */
export async function freshParamRows(db: Knex, lotIds: number[], key: ParamKey): Promise<StationStatRow[]> {
  await freshenLotStats(db, lotIds)
  return paramRowsForLots(db, lotIds, key)
}

/** A lot's capability under each revision its values were judged by, against that revision's limits. */
function capabilityByRevision(rows: StationStatRow[], book: RevisionBook, key: ParamKey): TrendCapability[] {
  return [...poolBy(rows, (r) => r.revisionId)].flatMap(([revisionId, p]) => {
    if (p.moments.n === 0) return []
    const s = summarise(p)
    const limit = book.limitFor(revisionId, key)
    const lsl = limit?.lsl ?? null
    const usl = limit?.usl ?? null
    const c = capabilityIndices({ mean: s.mean!, sigmaWithin: s.sigmaWithin, sigmaOverall: s.sigmaOverall, lsl, usl, n: s.n })
    return [{
      ...book.tag(revisionId), lsl, usl, n: s.n, mean: s.mean!, sigma: s.sigmaOverall, sigmaWithin: s.sigmaWithin, outOfSpec: p.outOfSpec,
      cp: c.cp, cpk: c.cpk, pp: c.pp, ppk: c.ppk, intervals: capabilityIntervals(c, s.n), band: capabilityBand(c.cpk, s.n),
    }]
  }).sort(byRevision)
}

/**
 * One parameter of a part lot by lot. Each lot's location and spread pool all its values (they do not depend on the
 * limits) and feed the across-lot chart; its capability is given per revision judged, each against its own limits.
 */
export async function lotTrends(db: Knex, { series: q, from, to, includeEngineering = false }: { series: SeriesQuery; from?: Date; to?: Date; includeEngineering?: boolean }, now = new Date()): Promise<TrendsView> {
  const series = await resolveSeries(db, q, now)
  const key = { step: series.step, name: q.name, qualifier: q.qualifier }

  const lots = (await lotsOfProduct(db, series.product.id, series.step, includeEngineering))
    .filter((l) => l.firstRunAt && l.lastRunAt && (!from || l.lastRunAt >= from) && (!to || l.firstRunAt <= to))
    .sort((a, b) => a.createdAt.getTime() - b.createdAt.getTime() || a.firstRunAt!.getTime() - b.firstRunAt!.getTime() || a.code.localeCompare(b.code))
  const [paramRows, book] = await Promise.all([freshParamRows(db, lots.map((l) => l.id), key), revisionBook(db, series.product.id)])
  const rowsOfLot = new Map<number, StationStatRow[]>()
  for (const r of paramRows) rowsOfLot.set(r.lotId, [...(rowsOfLot.get(r.lotId) ?? []), r])

  const rows: Omit<TrendLot, 'beyondLimits' | 'rules'>[] = lots.flatMap((l) => {
    const own = rowsOfLot.get(l.id) ?? []
    const p = poolRows(own)
    if (p.moments.n === 0) return []
    const s = summarise(p)
    return [{
      code: l.code, status: l.status, engineering: l.engineering, createdAt: l.createdAt.toISOString(), firstRunAt: l.firstRunAt!.toISOString(), lastRunAt: l.lastRunAt!.toISOString(),
      n: s.n, mean: s.mean!, sigma: s.sigmaOverall, sigmaWithin: s.sigmaWithin, min: s.min!, max: s.max!,
      capability: capabilityByRevision(own, book, key),
    }]
  })

  // The lot means as an individuals series: limits from their moving ranges, zone rules on the same series.
  const means = rows.map((r) => r.mean)
  const limits = individualsLimits(means)
  const usable = limits !== null && Number.isFinite(limits.sigma) && limits.sigma > 0
  const hits = usable ? westernElectricHits(means, limits.centre, limits.sigma) : means.map(() => [])
  const fit = linearRegression(means.map((_, i) => i), means)

  return {
    part: { partNumber: series.product.partNumber, name: series.product.name, steps: series.product.steps },
    parameter: series.parameter,
    from: from?.toISOString() ?? null,
    to: to?.toISOString() ?? null,
    engineering: includeEngineering ? 'include' : 'exclude',
    lots: rows.map((r, i) => ({
      ...r,
      beyondLimits: usable ? r.mean > limits.ucl || r.mean < limits.lcl : false,
      rules: hits[i] ?? [],
    })),
    acrossLots: limits && usable ? { n: limits.n, centre: limits.centre, sigma: limits.sigma, ucl: limits.ucl, lcl: limits.lcl } : null,
    drift: fit ? { slopePerLot: fit.slope, interval: fit.slopeInterval, n: fit.n, r2: fit.r2 } : null,
  }
}
