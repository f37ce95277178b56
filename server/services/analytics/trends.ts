// One parameter of one part across its lots, from the lot × station aggregates only.
import type { Knex } from 'knex'
import { capabilityBand, capabilityIndices } from '../../../shared/utils/capability'
import { individualsLimits, westernElectricHits } from '../../../shared/utils/control'
import { linearRegression } from '../../../shared/utils/regression'
import { lotsOfProduct, paramRowsForLots, type ParamKey, type StationStatRow } from '../../database/repositories/analytics-params'
import type { FieldError } from '../../utils/problem'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { parseInstant, parseSeriesQuery, resolveSeries } from './series-query'
import { poolBy, summarise } from './station-rows'

/** The lots' rows of one parameter, with every stored run folded in first. */
export async function freshParamRows(db: Knex, lotIds: number[], key: ParamKey): Promise<StationStatRow[]> {
  await freshenLotStats(db, lotIds)
  return paramRowsForLots(db, lotIds, key)
}

function endOfDayIfDate(raw: unknown, d: Date | undefined): Date | undefined {
  return d && typeof raw === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(raw) ? new Date(d.getTime() + 86_400_000 - 1) : d
}

export async function lotTrends(db: Knex, query: Record<string, unknown>, now = new Date()) {
  const errors: FieldError[] = []
  const from = parseInstant(query, 'from', errors)
  const to = endOfDayIfDate(query.to, parseInstant(query, 'to', errors))
  const q = parseSeriesQuery(query, errors)
  const series = await resolveSeries(db, q, now)
  const key = { step: series.step, name: q.name, qualifier: q.qualifier }

  const lots = (await lotsOfProduct(db, series.product.id, series.step))
    .filter((l) => l.firstRunAt && l.lastRunAt && (!from || l.lastRunAt >= from) && (!to || l.firstRunAt <= to))
    .sort((a, b) => a.createdAt.getTime() - b.createdAt.getTime() || a.firstRunAt!.getTime() - b.firstRunAt!.getTime() || a.code.localeCompare(b.code))
  const pooled = poolBy(await freshParamRows(db, lots.map((l) => l.id), key), (r) => r.lotId)
  const lsl = series.limit?.lsl ?? null
  const usl = series.limit?.usl ?? null

  const rows = lots.flatMap((l) => {
    const p = pooled.get(l.id)
    if (!p || p.moments.n === 0) return []
    const s = summarise(p)
    const c = capabilityIndices({ mean: s.mean!, sigmaWithin: s.sigmaWithin, sigmaOverall: s.sigmaOverall, lsl, usl, n: s.n })
    return [{
      code: l.code, status: l.status, createdAt: l.createdAt.toISOString(), firstRunAt: l.firstRunAt!.toISOString(), lastRunAt: l.lastRunAt!.toISOString(),
      n: s.n, mean: s.mean!, sigma: s.sigmaOverall, sigmaWithin: s.sigmaWithin, min: s.min!, max: s.max!, outOfSpec: p.outOfSpec,
      cpk: c.cpk, ppk: c.ppk, band: capabilityBand(c.cpk, s.n),
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
    lots: rows.map((r, i) => ({
      ...r,
      beyondLimits: usable ? r.mean > limits.ucl || r.mean < limits.lcl : false,
      rules: hits[i] ?? [],
    })),
    acrossLots: limits && usable ? { n: limits.n, centre: limits.centre, sigma: limits.sigma, ucl: limits.ucl, lcl: limits.lcl } : null,
    drift: fit ? { slopePerLot: fit.slope, interval: fit.slopeInterval, n: fit.n, r2: fit.r2 } : null,
  }
}
