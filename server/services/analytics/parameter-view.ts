import type { Knex } from 'knex'
import { ewma, individualsLimits, westernElectricHits } from '../../../shared/utils/control'
import { qualifierKind } from '../../../shared/utils/measurement-names'
import { limitInForce } from '../../../shared/utils/phase-noise-mask'
import { slopeFromCentredSums } from '../../../shared/utils/regression'
import { findLotHeader } from '../../database/repositories/lot-stats'
import { findBaseline, parameterHistogram, parameterMoments, parameterPoints, parameterTrendSums, type ParamKey } from '../../database/repositories/parameter-values'
import { listEffectiveRevisions, revisionAt } from '../../database/repositories/spec-lookup'
import { parameterLabel } from './lot-summary'

export const BASELINE_POINTS = 25
export const CHART_POINTS = 2000
const BINS = 30

export type ParameterQuery = { code: string; name: string; step: string; qualifier: number; attempts: 'first' | 'all' }

/** Histogram, individuals chart with rule hits, EWMA and drift of one parameter in one lot. Sends at most CHART_POINTS points. */
export async function parameterView(db: Knex, q: ParameterQuery, now = new Date()) {
  const lot = await findLotHeader(db, q.code)
  if (!lot) return undefined
  const key: ParamKey = { lotId: lot.id, step: q.step, name: q.name, qualifier: q.qualifier, firstOnly: q.attempts === 'first' }
  const [moments, revisions, frozen] = await Promise.all([parameterMoments(db, key), listEffectiveRevisions(db, lot.productId), findBaseline(db, key)])
  const limit = limitInForce(revisionAt(revisions, now)?.limits ?? [], q)
  const parameter = {
    step: q.step, name: q.name, qualifier: q.qualifier, label: parameterLabel(q.name, q.qualifier), unit: limit?.unit ?? null,
    lsl: limit?.lsl ?? null, usl: limit?.usl ?? null, target: limit?.target ?? null, qualifierKind: qualifierKind(q.name),
  }
  if (moments.n === 0) return { lot: { code: lot.code, partNumber: lot.partNumber }, parameter, n: 0, histogram: null, normal: null, control: null, ewma: null, drift: null }

  const lo = Math.min(moments.min!, parameter.lsl ?? Infinity)
  const hi = Math.max(moments.max!, parameter.usl ?? -Infinity)
  const pad = hi > lo ? 0 : Math.max(Math.abs(lo) * 1e-6, 1e-12)
  const [counts, points, baselinePoints, sums] = await Promise.all([
    parameterHistogram(db, key, lo - pad, hi + pad, BINS),
    parameterPoints(db, key, { tail: CHART_POINTS }),
    frozen ? Promise.resolve([]) : parameterPoints(db, key, { head: BASELINE_POINTS }),
    parameterTrendSums(db, key, moments.n, moments.mean!),
  ])
  const width = (hi + pad - (lo - pad)) / BINS
  const histogram = { edges: Array.from({ length: BINS + 1 }, (_, i) => lo - pad + i * width), counts }

  const base = frozen
    ? { centre: frozen.centre as number, sigma: frozen.sigma as number, n: frozen.n as number }
    : (() => { const l = individualsLimits(baselinePoints.map((p) => p.value)); return l && l.sigma > 0 ? { centre: l.centre, sigma: l.sigma, n: l.n } : null })()
  const firstIndex = moments.n - points.length
  let control = null
  let ewmaView = null
  if (base) {
    const hits = westernElectricHits(points.map((p) => p.value), base.centre, base.sigma)
    control = {
      baselineN: base.n, frozen: !!frozen, centre: base.centre, sigma: base.sigma, ucl: base.centre + 3 * base.sigma, lcl: base.centre - 3 * base.sigma,
      points: points.map((p, i) => ({ index: firstIndex + i, runId: p.runId, serial: p.serial, station: p.station, startedAt: p.startedAt, value: p.value, rules: hits[i] ?? [] })),
    }
    const e = ewma(points.map((p) => p.value), { lambda: 0.2, L: 3, mu0: base.centre, sigma: base.sigma })
    ewmaView = { lambda: e.lambda, L: e.L, asymptoticUcl: e.asymptoticUcl, asymptoticLcl: e.asymptoticLcl, points: e.points.map((p, i) => ({ index: firstIndex + i, z: p.z, ucl: p.ucl, lcl: p.lcl, signal: p.signal })) }
  }
  const slope = slopeFromCentredSums(sums)
  return {
    lot: { code: lot.code, partNumber: lot.partNumber },
    parameter,
    n: moments.n,
    histogram,
    normal: moments.sd ? { mean: moments.mean!, sigma: moments.sd } : null,
    control,
    ewma: ewmaView,
    drift: slope ? { slopePer1000: slope.slope, interval: slope.slopeInterval, n: slope.n } : null,
  }
}
