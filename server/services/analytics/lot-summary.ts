import type { Knex } from 'knex'
import { capabilityFromStats, sigmaFromMovingRange } from '../../../shared/utils/capability'
import { parameterLabel } from '../../../shared/utils/value-format'
import { emptyMoments, mergeMoments, momentsFromShiftedSums, stdDev } from '../../../shared/utils/moments'
import { paretoFailures, rolledThroughputYield, wilsonInterval } from '../../../shared/utils/yield'
import { findLotHeader, paramStats, stepStats, type LotHeader, type ParamStatsRow } from '../../database/repositories/lot-stats'
import type { CapabilityRow, LotSummary, Population as LotSummaryPopulation } from '../../../shared/types/capability'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { qualifierFields } from '../ingest/run-view'
import { inPopulation, statsBacklog } from './param-populations'
import { byRevision, revisionBook, type RevisionBook } from './revision-limits'

export type Population = LotSummaryPopulation

/** One parameter under one revision, its station rows added together. */
type Merged = {
  step: string; name: string; qualifier: number; revisionId: number; unit: string; n: number; mean: number | null; sd: number | null
  min: number; max: number; mrSum: number; mrN: number; outOfSpec: number; failAll: number
}


const parameterKey = (r: { step: string; name: string; qualifier: number }) => `${r.step}\u0000${r.name}\u0000${r.qualifier}`

/**
 * Adds the station rows of each parameter and revision together (moments by Chan's merge, moving ranges by sum).
 * Rows of different revisions are never merged: each was judged by its own limits.
 */
export function mergeStationRows(rows: ParamStatsRow[]): Merged[] {
  const groups = new Map<string, Merged & { m: ReturnType<typeof emptyMoments> }>()
  for (const r of rows) {
    const k = `${parameterKey(r)}\u0000${r.revisionId}`
    const g = groups.get(k) ?? { step: r.step, name: r.name, qualifier: r.qualifier, revisionId: r.revisionId, unit: r.unit, n: 0, mean: null, sd: null, min: Infinity, max: -Infinity, mrSum: 0, mrN: 0, outOfSpec: 0, failAll: 0, m: emptyMoments() }
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

/**
 * The groups a table shows: a parameter's revisions with values in the sample; a parameter with none keeps one
 * empty row (its latest revision), so it is still listed.
 */
export function sampledGroups<G extends { step: string; name: string; qualifier: number; revisionId: number; n: number }>(groups: G[], book: RevisionBook): G[] {
  const byParameter = new Map<string, G[]>()
  for (const g of groups) byParameter.set(parameterKey(g), [...(byParameter.get(parameterKey(g)) ?? []), g])
  return [...byParameter.values()].flatMap((gs) => {
    const sampled = gs.filter((g) => g.n > 0)
    if (sampled.length) return sampled
    return [gs.sort((a, b) => byRevision(book.tag(b.revisionId), book.tag(a.revisionId)))[0]!]
  })
}

/** The lot's parameter rows in the population asked for, its station rows merged, after a bounded fold of its queue. */
async function parameterStats(db: Knex, lotId: number, population: Population) {
  const [backlog] = await freshenLotStats(db, [lotId])
  return { merged: mergeStationRows(inPopulation(await paramStats(db, lotId), population)), backlog: statsBacklog(backlog) }
}

function stepOrder(lot: LotHeader, step: string) {
  const i = lot.steps.indexOf(step)
  return i < 0 ? 99 : i
}

function capabilityRow(p: Merged, book: RevisionBook, revisionsOfParameter: number): CapabilityRow {
  const limit = book.limitFor(p.revisionId, p)
  const sigmaWithin = p.mrN > 0 ? sigmaFromMovingRange(p.mrSum, p.mrN) : null
  const c = capabilityFromStats({ n: p.n, mean: p.mean, sigmaWithin, sigmaOverall: p.sd, outOfSpecCount: p.outOfSpec, lsl: limit?.lsl, usl: limit?.usl })
  return {
    ...book.tag(p.revisionId),
    step: p.step, name: p.name, qualifier: p.qualifier, ...qualifierFields(p.name, p.qualifier), label: parameterLabel(p.name, p.qualifier),
    unit: p.unit, n: p.n, mean: p.mean, sigmaWithin, sigmaOverall: p.sd, min: p.min, max: p.max,
    lsl: limit?.lsl ?? null, usl: limit?.usl ?? null, target: limit?.target ?? null,
    cp: c.cp, cpk: c.cpk, pp: c.pp, ppk: c.ppk, intervals: c.intervals,
    outOfSpec: p.outOfSpec, observedPpm: c.observedPpm, expectedPpm: c.expectedPpm,
    band: c.band, keyCharacteristic: limit?.key ?? false, revisionsOfParameter,
  }
}

/**
 * Yield, capability and failure Pareto of a lot, from the running aggregates (either population; no scan of measurements).
 * Capability is one row per parameter and revision judged, each against that revision's limits.
 */
export async function lotSummary(db: Knex, code: string, population: Population = 'first'): Promise<LotSummary | undefined> {
  const lot = await findLotHeader(db, code)
  if (!lot) return undefined
  const [steps, { merged: params, backlog }, book] = await Promise.all([stepStats(db, lot.id), parameterStats(db, lot.id, population), revisionBook(db, lot.productId)])
  const stepRows = steps.sort((a, b) => stepOrder(lot, a.step) - stepOrder(lot, b.step)).map((s) => ({
    ...s, finalPass: s.latestPass,
    firstPassYield: wilsonInterval(s.firstPass, s.units), finalYield: wilsonInterval(s.latestPass, s.units),
  }))
  const fpy = lot.steps.map((st) => stepRows.find((s) => s.step === st)?.firstPassYield?.p)
  const shown = sampledGroups(params, book)
  const revisionCount = new Map<string, number>()
  for (const p of shown) revisionCount.set(parameterKey(p), (revisionCount.get(parameterKey(p)) ?? 0) + 1)
  const capability = shown
    .map((p) => capabilityRow(p, book, revisionCount.get(parameterKey(p))!))
    .sort((a, b) => stepOrder(lot, a.step) - stepOrder(lot, b.step) || a.name.localeCompare(b.name) || a.qualifier - b.qualifier || byRevision(a, b))
  // a failure count adds verdicts, each already judged by the revision in force at its test
  const failures = new Map<string, number>()
  for (const p of params) if (p.failAll > 0) failures.set(parameterKey(p), (failures.get(parameterKey(p)) ?? 0) + p.failAll)
  const pareto = paretoFailures([...failures].map(([key, count]) => ({ key, count }))).map((r) => {
    const [step, name, q] = r.key.split('\u0000') as [string, string, string]
    return { step, name, qualifier: Number(q), label: parameterLabel(name, Number(q)), count: r.count, percent: r.percent, cumulativePercent: r.cumulativePercent }
  })
  return {
    lot: { code: lot.code, partNumber: lot.partNumber, productName: lot.productName, status: lot.status, plannedQty: lot.plannedQty, unitsTested: Math.max(0, ...stepRows.map((s) => s.units)) },
    population,
    steps: stepRows,
    rolledThroughputYield: fpy.every((y) => y !== undefined) ? rolledThroughputYield(fpy as number[]) : null,
    revisions: book.judged(capability.map((c) => c.revisionId)),
    capability,
    pareto,
    backlog,
  }
}
