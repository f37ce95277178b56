// The fold's share of the fine bins: a slice's plausible values are counted into their lot parameter's bins (first
// attempts and all attempts), a group whose values outgrow its exponent is re-counted at the coarser one first, and
// the groups a late first attempt changed are recounted from the rows. Called under the lot's fold lease.
import type { Knex } from 'knex'
import { binExponent, binOf, coarsen } from '../../../shared/utils/fine-bins'
import type { RebuildMark, ValueOfRow } from '../../database/repositories/param-stats'
import {
  addToBins, binGroupsOfLot, binsOfGroup, clearBins, rebuildBins, writeBinGroups, type BinCount, type BinGroup, type BinGroupKey, type BinIncrement,
} from '../../database/repositories/param-bins'

const groupText = (g: BinGroupKey) => `${g.step}\u0000${g.name}\u0000${g.qualifier}\u0000${g.revisionId}`

/** Counts the values of folded runs (all of one lot) into the lot's bins. */
export async function addValuesToBins(trx: Knex.Transaction, values: ValueOfRow[]): Promise<void> {
  const plausible = values.filter((v) => !v.value.implausible)
  if (!plausible.length) return
  const lotId = plausible[0]!.key.lotId
  const arriving = new Map<string, { key: BinGroupKey; values: { value: number; first: boolean }[] }>()
  for (const { key, value } of plausible) {
    const g = { lotId: key.lotId, step: key.step, name: key.name, qualifier: key.qualifier, revisionId: key.revisionId }
    const t = groupText(g)
    let a = arriving.get(t)
    if (!a) { a = { key: g, values: [] }; arriving.set(t, a) }
    a.values.push({ value: value.value, first: value.firstAttempt })
  }
  const stored = new Map((await binGroupsOfLot(trx, lotId, [...new Set(plausible.map((v) => v.key.step))])).map((g) => [groupText(g), g]))
  const groups: BinGroup[] = []
  const increments: BinIncrement[] = []
  for (const [t, a] of arriving) {
    const old = stored.get(t)
    let min = old?.min ?? Infinity
    let max = old?.max ?? -Infinity
    for (const v of a.values) { if (v.value < min) min = v.value; if (v.value > max) max = v.value }
    // the exponent is a non-decreasing function of the extremes, so this is the exponent of the whole group
    const exponent = Math.max(old?.exponent ?? -Infinity, binExponent(min, max))
    const counts = new Map<number, BinCount>()
    if (old && exponent > old.exponent) {
      // wider values arrived: the stored bins merge into the coarser ones (⌊k / 2^(e'−e)⌋ is exact) and are written anew
      for (const b of coarsen(await binsOfGroup(trx, a.key), old.exponent, exponent, (into, x) => { into.nFirst += x.nFirst; into.nAll += x.nAll })) counts.set(b.k, b)
      await clearBins(trx, a.key)
    }
    for (const v of a.values) {
      const k = binOf(v.value, exponent)
      const c = counts.get(k) ?? { k, nFirst: 0, nAll: 0 }
      c.nAll++
      if (v.first) c.nFirst++
      counts.set(k, c)
    }
    for (const c of counts.values()) increments.push({ ...a.key, ...c })
    groups.push({ ...a.key, exponent, min, max })
  }
  await writeBinGroups(trx, groups)
  await addToBins(trx, increments)
}

/**
 * A run that became a unit's first attempt moved values between the populations: the bins of each marked lot, step
 * and revision are recounted from the rows (rare; every parameter of that step and revision).
 */
export async function rebuildMarkedBins(trx: Knex.Transaction, marks: RebuildMark[]): Promise<void> {
  const scopes = new Map<string, RebuildMark>()
  for (const m of marks) scopes.set(`${m.lotId}\u0000${m.step}\u0000${m.revisionId}`, m)
  for (const m of scopes.values()) await rebuildBins(trx, { lotId: m.lotId, step: m.step, revisionId: m.revisionId })
}

/** Every bin of a lot recounted from its rows (bulk loads, repair), leaving queued runs to the fold. */
export async function rebuildLotBins(trx: Knex.Transaction, lotId: number): Promise<void> {
  await rebuildBins(trx, { lotId })
}
