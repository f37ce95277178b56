import type { Knex } from 'knex'
import { capabilityFromStats, sigmaFromMovingRange } from '../../../shared/utils/capability'
import { formatQualifier, KNOWN_MEASUREMENTS } from '../../../shared/utils/measurement-names'
import { limitInForce } from '../../../shared/utils/phase-noise-mask'
import { emptyMoments, mergeMoments, momentsFromShiftedSums, stdDev } from '../../../shared/utils/moments'
import { paretoFailures, rolledThroughputYield, wilsonInterval } from '../../../shared/utils/yield'
import { findLotHeader, paramStats, paramStatsAllAttempts, stepStats, type LotHeader, type ParamStatsRow } from '../../database/repositories/lot-stats'
import { listEffectiveRevisions, revisionAt, type SpecLimit } from '../../database/repositories/spec-lookup'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { qualifierFields } from '../ingest/run-view'

export type Population = 'first' | 'all'

type Merged = { step: string; name: string; qualifier: number; unit: string; n: number; mean: number | null; sd: number | null; min: number; max: number; mrSum: number; mrN: number; outOfSpec: number; failAll: number }

export function parameterLabel(name: string, qualifier: number): string {
  const base = (KNOWN_MEASUREMENTS as Record<string, { label: string }>)[name]?.label ?? name.replace(/_/g, ' ')
  const q = formatQualifier(name, qualifier || null)
  return q ? `${base} @ ${q}` : base
}

/** Adds the station rows of each parameter together (moments by Chan's merge, moving ranges by sum). */
export function mergeStationRows(rows: ParamStatsRow[]): Merged[] {
  const groups = new Map<string, Merged & { m: ReturnType<typeof emptyMoments> }>()
  for (const r of rows) {
    const k = `${r.step}\u0000${r.name}\u0000${r.qualifier}`
    const g = groups.get(k) ?? { step: r.step, name: r.name, qualifier: r.qualifier, unit: r.unit, n: 0, mean: null, sd: null, min: Infinity, max: -Infinity, mrSum: 0, mrN: 0, outOfSpec: 0, failAll: 0, m: emptyMoments() }
    if (r.n > 0) g.m = mergeMoments(g.m, momentsFromShiftedSums(r.n, r.shift, r.sumD, r.sumSqD, r.min, r.max))
    g.mrSum += r.mrSum
    g.mrN += r.mrN
    g.outOfSpec += r.outOfSpec
    g.failAll += r.failAll
    groups.set(k, g)
  }
  return [...groups.values()].map(({ m, ...g }) => ({
    ...g, n: m.n, mean: m.n > 0 ? m.mean : null, sd: m.n >= 2 ? stdDev(m) : null,
    min: m.n > 0 ? m.min : NaN, max: m.n > 0 ? m.max : NaN,
  }))
}

async function firstAttemptStats(db: Knex, lotId: number): Promise<Merged[]> {
  await freshenLotStats(db, [lotId])
  return mergeStationRows(await paramStats(db, lotId))
}

async function allAttemptStats(db: Knex, lotId: number): Promise<Merged[]> {
  return (await paramStatsAllAttempts(db, lotId)).map((r) => ({ ...r, mean: r.n > 0 ? r.mean : null }))
}

function limitFor(limits: SpecLimit[], p: { step: string; name: string; qualifier: number }) {
  return limitInForce(limits, p)
}

function stepOrder(lot: LotHeader, step: string) {
  const i = lot.steps.indexOf(step)
  return i < 0 ? 99 : i
}

/** Yield, capability and failure Pareto of a lot, from the running aggregates (no scan of measurements by default). */
export async function lotSummary(db: Knex, code: string, population: Population = 'first', now = new Date()) {
  const lot = await findLotHeader(db, code)
  if (!lot) return undefined
  const [steps, params, revisions] = await Promise.all([
    stepStats(db, lot.id),
    population === 'first' ? firstAttemptStats(db, lot.id) : allAttemptStats(db, lot.id),
    listEffectiveRevisions(db, lot.productId),
  ])
  const limits = revisionAt(revisions, now)?.limits ?? []
  const stepRows = steps.sort((a, b) => stepOrder(lot, a.step) - stepOrder(lot, b.step)).map((s) => ({
    ...s, finalPass: s.latestPass,
    firstPassYield: wilsonInterval(s.firstPass, s.units), finalYield: wilsonInterval(s.latestPass, s.units),
  }))
  const fpy = lot.steps.map((st) => stepRows.find((s) => s.step === st)?.firstPassYield?.p)
  const capability = params
    .sort((a, b) => stepOrder(lot, a.step) - stepOrder(lot, b.step) || a.name.localeCompare(b.name) || a.qualifier - b.qualifier)
    .map((p) => {
      const limit = limitFor(limits, p)
      const sigmaWithin = p.mrN > 0 ? sigmaFromMovingRange(p.mrSum, p.mrN) : null
      const c = capabilityFromStats({ n: p.n, mean: p.mean, sigmaWithin, sigmaOverall: p.sd, outOfSpecCount: p.outOfSpec, lsl: limit?.lsl, usl: limit?.usl })
      return {
        step: p.step, name: p.name, qualifier: p.qualifier, ...qualifierFields(p.name, p.qualifier), label: parameterLabel(p.name, p.qualifier),
        unit: p.unit, n: p.n, mean: p.mean, sigmaWithin, sigmaOverall: p.sd, min: p.min, max: p.max,
        lsl: limit?.lsl ?? null, usl: limit?.usl ?? null, target: limit?.target ?? null,
        cp: c.cp, cpk: c.cpk, pp: c.pp, ppk: c.ppk, cpkInterval: c.cpkInterval, observedPpm: c.observedPpm, expectedPpm: c.expectedPpm,
        band: c.band, keyCharacteristic: limit?.key ?? false,
      }
    })
  const failing = params.filter((p) => p.failAll > 0)
  const pareto = paretoFailures(failing.map((p) => ({ key: `${p.step}\u0000${p.name}\u0000${p.qualifier}`, count: p.failAll }))).map((r) => {
    const [step, name, q] = r.key.split('\u0000') as [string, string, string]
    return { step, name, qualifier: Number(q), label: parameterLabel(name, Number(q)), count: r.count, percent: r.percent, cumulativePercent: r.cumulativePercent }
  })
  return {
    lot: { code: lot.code, partNumber: lot.partNumber, productName: lot.productName, status: lot.status, plannedQty: lot.plannedQty, unitsTested: Math.max(0, ...stepRows.map((s) => s.units)) },
    population,
    steps: stepRows,
    rolledThroughputYield: fpy.every((y) => y !== undefined) ? rolledThroughputYield(fpy as number[]) : null,
    capability,
    pareto,
  }
}
