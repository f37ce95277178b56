// The fold's part for the drift sums and the repairs: values in time order take the next rank of their parameter
// and revision (both populations; first attempts count in both), a value older than the group's last is put in its
// place from the values after it or, far back, marks the group for a repair, and a repair takes the group's moving
// ranges and drift sums again from one index range.
import type { Knex } from 'knex'
import { movingRangeSum } from '../../../shared/utils/capability'
import type { ParamRow } from '../../../shared/types/param-stats'
import type { ValueOfRow } from '../../database/repositories/param-stats'
import {
  forgetRepair, forgetTrendOfGroup, forgetTrendOfLot, groupsOfLot, groupValues, queuedRepairs, queueRepairs, trendRowsOfLot, writeStationRanges, writeTrendRows,
  type GroupValue, type StationRanges,
} from '../../database/repositories/param-trend'
import { addTrendValue, afterLast, emptyTrendRow, insertTrendValue, trendRowFromValues, type TrendGroup, type TrendRow, type TrendValue } from './param-trend-merge'
import { trendTail, type TrendTail } from './param-trend-tail'

// a late value is put in its place at fold time when at most this many folded values of its group come after the
// fold's earliest late value (one index range read from there, in every slice: stations posting side by side deliver
// values seconds, some tens of values, out of order all the time); further back (buffered uploads, many busy
// connections at once), the group is left to one repair of all its values after the last slice, which costs less
// than reading long tails slice after slice (at 20,000 the batch ingest bench halved)
const TAIL_VALUES = 2_000

const groupText = (g: TrendGroup) => `${g.step}\u0000${g.name}\u0000${g.qualifier}\u0000${g.revisionId}`
const groupOf = (r: TrendGroup): TrendGroup => ({ lotId: r.lotId, step: r.step, name: r.name, qualifier: r.qualifier, revisionId: r.revisionId })
const rowText = (g: TrendGroup, allAttempts: boolean) => `${groupText(g)}\u0000${allAttempts}`
// first attempts count in both populations, retests in the all-attempt one only
const populationsOf = (v: { firstAttempt: boolean }) => (v.firstAttempt ? [true, false] : [true])
// a value older than a row's last that can still be put in place (a stale row waits for its repair)
const isLate = (row: TrendRow, v: TrendValue) => !row.stale && !afterLast(row, v)

/**
 * Adds a fold's values (already in time order) to the lot's drift sums. A value older than its row's last is put in
 * its place from the folded values after it when there are few of them; otherwise the row goes stale and its group is
 * queued for a repair.
 */
export async function foldTrendValues(trx: Knex.Transaction, lotId: number, inTimeOrder: ValueOfRow[]): Promise<void> {
  const plausible = inTimeOrder.filter(({ value }) => !value.implausible && Number.isFinite(value.value))
  if (!plausible.length) return
  const rows = new Map<string, TrendRow>()
  for (const r of await trendRowsOfLot(trx, lotId, [...new Set(plausible.map((v) => v.key.step))])) rows.set(rowText(r, r.allAttempts), r)
  const tails = await lateTails(trx, plausible, rows)
  const touched = new Set<TrendRow>()
  for (const { key, value } of plausible) {
    const tail = tails.get(groupText(key))
    for (const all of populationsOf(value)) {
      let row = rows.get(rowText(key, all))
      if (!row) { row = emptyTrendRow(groupOf(key), all, value.value); rows.set(rowText(key, all), row) }
      if (tail && isLate(row, value)) insertTrendValue(row, value, tail.after(all, row.shift, value))
      else addTrendValue(row, value)
      touched.add(row)
    }
  }
  await writeTrendRows(trx, [...touched])
  await queueStaleGroups(trx, [...touched].filter((r) => r.stale))
}

/**
 * For each group with a value older than its row's last (rows as they were before this fold; values in time order, so
 * the first such value is the earliest), the folded values after that one, when there are at most TAIL_VALUES.
 */
async function lateTails(trx: Knex.Transaction, inTimeOrder: ValueOfRow[], rows: Map<string, TrendRow>): Promise<Map<string, TrendTail>> {
  const earliest = new Map<string, { group: TrendGroup; from: TrendValue }>()
  for (const { key, value } of inTimeOrder) {
    const g = groupText(key)
    if (earliest.has(g)) continue
    if (populationsOf(value).some((all) => { const row = rows.get(rowText(key, all)); return !!row && isLate(row, value) })) earliest.set(g, { group: groupOf(key), from: value })
  }
  const tails = new Map<string, TrendTail>()
  for (const [g, { group, from }] of earliest) {
    const after = await groupValues(trx, group, { from, limit: TAIL_VALUES + 1 })
    if (after.length <= TAIL_VALUES) tails.set(g, trendTail(after))
  }
  return tails
}

/** Queues the groups of parameter rows whose moving range a late value left stale. */
export async function queueStaleGroups(trx: Knex.Transaction, rows: (TrendGroup & Partial<Pick<ParamRow, 'mrStale' | 'aMrStale'>> & { stale?: boolean })[]): Promise<void> {
  const stale = rows.filter((r) => r.stale || r.mrStale || r.aMrStale)
  const groups = new Map(stale.map((r) => [groupText(r), groupOf(r)]))
  await queueRepairs(trx, [...groups.values()])
}

function stationRanges(values: GroupValue[]): StationRanges[] {
  const byStation = new Map<number, GroupValue[]>()
  for (const v of values) {
    const list = byStation.get(v.stationId)
    if (list) list.push(v); else byStation.set(v.stationId, [v])
  }
  return [...byStation].map(([stationId, vs]) => {
    const ranges = (xs: GroupValue[]) => {
      const mr = movingRangeSum(xs.map((x) => x.value))
      const last = xs.at(-1)
      return { sum: mr.sum, count: mr.count, last: last ? { value: last.value, startedAt: last.startedAt } : null }
    }
    return { stationId, first: ranges(vs.filter((v) => v.firstAttempt)), all: ranges(vs) }
  })
}

/** The group's drift rows of both populations from its values in test order (a population without values has none). */
function trendRowsOfGroup(g: TrendGroup, values: GroupValue[]): TrendRow[] {
  return [trendRowFromValues(g, true, values), trendRowFromValues(g, false, values.filter((v) => v.firstAttempt))].filter((r) => r.n > 0)
}

/** Takes one group's moving ranges (each station, both populations) and drift sums again from its stored values. */
async function repairGroup(trx: Knex.Transaction, g: TrendGroup): Promise<void> {
  const values = await groupValues(trx, g)
  await writeStationRanges(trx, g, stationRanges(values))
  await forgetTrendOfGroup(trx, g)
  await writeTrendRows(trx, trendRowsOfGroup(g, values))
  await forgetRepair(trx, g)
}

/**
 * Repairs the lot's queued groups of at most `maxValues` values each, and stops once it has read `budget` values (after
 * at least one group), so that one transaction, and the lot's lease, is held for a bounded time; returns how many it
 * repaired and whether repairs it may do are left for the next slice.
 */
export async function repairQueuedGroups(trx: Knex.Transaction, lotId: number, maxValues: number, budget: number): Promise<{ repaired: number; more: boolean }> {
  let repaired = 0
  let read = 0
  for (const g of await queuedRepairs(trx, lotId)) {
    if (g.values > maxValues) continue
    if (repaired > 0 && read + g.values > budget) return { repaired, more: true }
    await repairGroup(trx, g)
    read += g.values
    repaired++
  }
  return { repaired, more: false }
}

/**
 * Recomputes every drift sum of a lot from its stored values (the caller holds the lot's lease, and has rebuilt the
 * statistics rows, moving ranges included, so only the drift rows are written here) and clears its queued repairs.
 */
export async function rebuildTrendOfLot(trx: Knex.Transaction, lotId: number): Promise<void> {
  await forgetTrendOfLot(trx, lotId)
  for (const g of await groupsOfLot(trx, lotId)) await writeTrendRows(trx, trendRowsOfGroup(g, await groupValues(trx, g)))
}
