import type { Knex } from 'knex'
import { ewma, individualsLimits, westernElectricHits } from '../../../shared/utils/control'
import { qualifierKind } from '../../../shared/utils/measurement-names'
import { MIN_DRIFT_UNITS, slopeFromCentredSums } from '../../../shared/utils/regression'
import { findLotHeader } from '../../database/repositories/lot-stats'
import { findBaseline, parameterPoints, type ParamKey, type RevisionMoments } from '../../database/repositories/parameter-values'
import { parameterDriftSums, parameterMoments } from './parameter-aggregates'
import type { ParameterView, RevisionCount } from '../../../shared/types/capability'
import { RuleError } from '../rule-error'
import { parameterLabel } from '../../../shared/utils/value-format'
import { revisionBook, type RevisionBook } from './revision-limits'
import { keptHistogram } from './kept-histogram'

export const BASELINE_POINTS = 25
export const CHART_POINTS = 2000
const BINS = 30

/** revision: the revision number whose values to show; null for the latest revision the lot's values were judged by. */
export type ParameterQuery = { code: string; name: string; step: string; qualifier: number; attempts: 'first' | 'all'; revision: number | null }

const EMPTY: RevisionMoments = { revisionId: 0, n: 0, mean: null, sd: null, min: null, max: null }

/** The revision to show: the one asked for (a revision of the part, with or without values here) or the latest with values. */
function chooseRevision(q: ParameterQuery, partNumber: string, book: RevisionBook, revisions: RevisionCount[], groups: RevisionMoments[]): RevisionMoments {
  if (q.revision === null) {
    const latest = revisions[revisions.length - 1]
    return groups.find((g) => g.revisionId === latest?.revisionId) ?? EMPTY
  }
  const id = book.idOf(q.revision)
  if (id === undefined) throw new RuleError(400, `${partNumber} has no approved revision ${q.revision}.`, [{ pointer: '/revision', message: 'not an approved revision of this part' }])
  return groups.find((g) => g.revisionId === id) ?? { ...EMPTY, revisionId: id }
}

/**
 * Histogram, individuals chart with rule hits, EWMA and drift of one parameter in one lot, over the values judged by
 * one revision and drawn against that revision's limits. Sends at most CHART_POINTS points.
 */
export async function parameterView(db: Knex, q: ParameterQuery): Promise<ParameterView | undefined> {
  const lot = await findLotHeader(db, q.code)
  if (!lot) return undefined
  const all = { lotId: lot.id, step: q.step, name: q.name, qualifier: q.qualifier, firstOnly: q.attempts === 'first' }
  const [{ groups, backlog }, book, frozen] = await Promise.all([parameterMoments(db, all, q.attempts), revisionBook(db, lot.productId), findBaseline(db, all)])
  const revisions = book.judged(groups.filter((g) => g.n > 0).map((g) => g.revisionId))
    .map((r) => ({ revisionId: r.revisionId, revision: r.revision, approvedAt: r.approvedAt, n: groups.find((g) => g.revisionId === r.revisionId)!.n }))
  const moments = chooseRevision(q, lot.partNumber, book, revisions, groups)
  const key: ParamKey = { ...all, revisionId: moments.revisionId }
  const limit = book.limitFor(moments.revisionId, q)
  const parameter = {
    ...book.tag(moments.revisionId),
    step: q.step, name: q.name, qualifier: q.qualifier, label: parameterLabel(q.name, q.qualifier), unit: limit?.unit ?? null,
    lsl: limit?.lsl ?? null, usl: limit?.usl ?? null, target: limit?.target ?? null, qualifierKind: qualifierKind(q.name),
  }
  if (moments.n === 0) return { lot: { code: lot.code, partNumber: lot.partNumber }, parameter, revisions, n: 0, histogram: null, normal: null, control: null, ewma: null, drift: null, driftMinUnits: MIN_DRIFT_UNITS, driftPending: false, backlog }

  const lo = Math.min(moments.min!, parameter.lsl ?? Infinity)
  const hi = Math.max(moments.max!, parameter.usl ?? -Infinity)
  const [histogram, points, baselinePoints, sums] = await Promise.all([
    keptHistogram(db, { ...key, revisionId: moments.revisionId }, lo, hi, BINS),
    parameterPoints(db, key, { tail: CHART_POINTS }),
    frozen ? Promise.resolve([]) : parameterPoints(db, key, { head: BASELINE_POINTS }),
    parameterDriftSums(db, { ...all, revisionId: moments.revisionId }, q.attempts),
  ])

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
      points: points.map((p, i) => ({ index: firstIndex + i, runId: p.runId, serial: p.serial, station: p.station, startedAt: new Date(p.startedAt).toISOString(), value: p.value, rules: hits[i] ?? [] })),
    }
    const e = ewma(points.map((p) => p.value), { lambda: 0.2, L: 3, mu0: base.centre, sigma: base.sigma })
    ewmaView = { lambda: e.lambda, L: e.L, asymptoticUcl: e.asymptoticUcl, asymptoticLcl: e.asymptoticLcl, points: e.points.map((p, i) => ({ index: firstIndex + i, z: p.z, ucl: p.ucl, lcl: p.lcl, signal: p.signal })) }
  }
  const slope = sums.sums && slopeFromCentredSums(sums.sums)
  return {
    lot: { code: lot.code, partNumber: lot.partNumber },
    parameter,
    revisions,
    n: moments.n,
    histogram,
    normal: moments.sd ? { mean: moments.mean!, sigma: moments.sd } : null,
    control,
    ewma: ewmaView,
    drift: slope && slope.n >= MIN_DRIFT_UNITS ? { slopePer1000: slope.slope, interval: slope.slopeInterval, n: slope.n } : null,
    driftMinUnits: MIN_DRIFT_UNITS,
    driftPending: sums.pending,
    backlog,
  }
}
