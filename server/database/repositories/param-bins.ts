// The fine bins of each lot parameter (lot_param_bins) with their exponent and extremes (lot_param_bin_groups), kept
// by the statistics fold under the lot's lease, and the reads of the views that derive histograms and quantiles.
import type { Knex } from 'knex'
import { binExponent, binSql } from '../../../shared/utils/fine-bins'
import { numberLiteral, textLiteral } from '../sql-literals'

/** One lot parameter judged by one revision: the unit of binning. */
export type BinGroupKey = { lotId: number; step: string; name: string; qualifier: number; revisionId: number }
export type BinGroup = BinGroupKey & { exponent: number; min: number; max: number }
export type BinCount = { k: number; nFirst: number; nAll: number }

const groupWhere = (g: BinGroupKey) => ({ lot_id: g.lotId, step: g.step, name: g.name, qualifier: g.qualifier, revision_id: g.revisionId })

function groupFromDb(r: any): BinGroup {
  return { lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), exponent: Number(r.exponent), min: Number(r.min_value), max: Number(r.max_value) }
}

/** The bin groups of a lot at the given steps (the caller holds the lot's fold lease). */
export async function binGroupsOfLot(trx: Knex.Transaction, lotId: number, steps: string[]): Promise<BinGroup[]> {
  if (!steps.length) return []
  return (await trx('lot_param_bin_groups').where({ lot_id: lotId }).whereIn('step', steps)).map(groupFromDb)
}

export async function binsOfGroup(db: Knex, g: BinGroupKey): Promise<BinCount[]> {
  const rows = await db('lot_param_bins').where(groupWhere(g)).orderBy('k').select('k', 'n_first', 'n_all')
  return rows.map((r: any) => ({ k: Number(r.k), nFirst: Number(r.n_first), nAll: Number(r.n_all) }))
}

export async function writeBinGroups(trx: Knex.Transaction, groups: BinGroup[]): Promise<void> {
  if (!groups.length) return
  const tuple = (g: BinGroup) => `(${g.lotId},${textLiteral(g.step)},${textLiteral(g.name)},${numberLiteral(g.qualifier)},${g.revisionId},${g.exponent},${numberLiteral(g.min)},${numberLiteral(g.max)})`
  if (!groups.every((g) => [g.lotId, g.revisionId, g.exponent].every(Number.isInteger))) throw new TypeError('bin group keys and exponents must be integers')
  await trx.raw(`INSERT INTO lot_param_bin_groups (lot_id, step, name, qualifier, revision_id, exponent, min_value, max_value) VALUES ${groups.map(tuple).join(',')}
    ON DUPLICATE KEY UPDATE exponent = VALUES(exponent), min_value = VALUES(min_value), max_value = VALUES(max_value)`)
}

export type BinIncrement = BinGroupKey & BinCount
const ROWS_PER_STATEMENT = 1000

/** Adds counts to bins, creating the bins not seen yet. */
export async function addToBins(trx: Knex.Transaction, rows: BinIncrement[]): Promise<void> {
  if (!rows.every((r) => [r.lotId, r.revisionId, r.k, r.nFirst, r.nAll].every(Number.isSafeInteger))) throw new TypeError('bin keys and counts must be whole numbers')
  const tuple = (r: BinIncrement) => `(${r.lotId},${textLiteral(r.step)},${textLiteral(r.name)},${numberLiteral(r.qualifier)},${r.revisionId},${r.k},${r.nFirst},${r.nAll})`
  for (let i = 0; i < rows.length; i += ROWS_PER_STATEMENT) {
    await trx.raw(`INSERT INTO lot_param_bins (lot_id, step, name, qualifier, revision_id, k, n_first, n_all) VALUES ${rows.slice(i, i + ROWS_PER_STATEMENT).map(tuple).join(',')}
      ON DUPLICATE KEY UPDATE n_first = n_first + VALUES(n_first), n_all = n_all + VALUES(n_all)`)
  }
}

/** Drops a group's bins (before they are written again at a coarser exponent). */
export async function clearBins(trx: Knex.Transaction, g: BinGroupKey): Promise<void> {
  await trx('lot_param_bins').where(groupWhere(g)).del()
}

export type BinScope = { lotId: number; step?: string; revisionId?: number }

/**
 * Recounts the bins of a lot (or of one step and revision of it) from the stored measurements: the extremes of each
 * group's plausible values give its exponent (`binExponent`, as in the fold), then one grouped
 * statement counts FLOOR(value / 2^e). Runs still queued for the fold are left out, and left in the queue, so the
 * fold adds them once.
 */
export async function rebuildBins(trx: Knex.Transaction, scope: BinScope): Promise<void> {
  const where: Record<string, string | number> = { lot_id: scope.lotId }
  if (scope.step !== undefined) where.step = scope.step
  if (scope.revisionId !== undefined) where.revision_id = scope.revisionId
  await trx('lot_param_bins').where(where).del()
  await trx('lot_param_bin_groups').where(where).del()
  const cond = Object.keys(where).map((c) => `m.${c} = ?`).join(' AND ')
  const vals = Object.values(where)
  const rows = `FROM measurements m WHERE ${cond} AND NOT m.implausible AND m.run_id NOT IN (SELECT run_id FROM lot_stats_pending WHERE lot_id = ?)`
  const [extremes] = await trx.raw(`SELECT m.step, m.name, m.qualifier, m.revision_id, MIN(m.value) AS min_value, MAX(m.value) AS max_value ${rows}
    GROUP BY m.step, m.name, m.qualifier, m.revision_id`, [...vals, scope.lotId])
  const groups: BinGroup[] = (extremes as any[]).map((r) => ({
    lotId: scope.lotId, step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id),
    min: Number(r.min_value), max: Number(r.max_value), exponent: binExponent(Number(r.min_value), Number(r.max_value)),
  }))
  for (let i = 0; i < groups.length; i += ROWS_PER_STATEMENT) await writeBinGroups(trx, groups.slice(i, i + ROWS_PER_STATEMENT))
  if (!groups.length) return
  await trx.raw(`INSERT INTO lot_param_bins (lot_id, step, name, qualifier, revision_id, k, n_first, n_all)
    SELECT ?, m.step, m.name, m.qualifier, m.revision_id, ${binSql('m.value', 'g.exponent')} AS bin, SUM(m.first_attempt), COUNT(*)
    FROM measurements m JOIN lot_param_bin_groups g
      ON g.lot_id = m.lot_id AND g.step = m.step AND g.name = m.name AND g.qualifier = m.qualifier AND g.revision_id = m.revision_id
    WHERE ${cond} AND NOT m.implausible AND m.run_id NOT IN (SELECT run_id FROM lot_stats_pending WHERE lot_id = ?)
    GROUP BY m.step, m.name, m.qualifier, m.revision_id, bin`, [scope.lotId, ...vals, scope.lotId])
}

/** A group with its bins, for a reader. */
export type KeptBins = BinGroup & { bins: BinCount[] }

/** The groups and bins of the given parameter names at one step and revision of a lot (every qualifier). */
export async function keptBins(db: Knex | Knex.Transaction, key: { lotId: number; step: string; revisionId: number; names: string[]; qualifier?: number }): Promise<KeptBins[]> {
  const where: Record<string, string | number> = { lot_id: key.lotId, step: key.step, revision_id: key.revisionId }
  if (key.qualifier !== undefined) where.qualifier = key.qualifier
  const [groups, bins] = await Promise.all([
    db('lot_param_bin_groups').where(where).whereIn('name', key.names),
    db('lot_param_bins').where(where).whereIn('name', key.names).select('name', 'qualifier', 'k', 'n_first', 'n_all'),
  ])
  const out = new Map<string, KeptBins>()
  for (const r of groups) { const g = groupFromDb(r); out.set(`${g.name}\u0000${g.qualifier}`, { ...g, bins: [] }) }
  for (const r of bins as any[]) out.get(`${r.name}\u0000${Number(r.qualifier)}`)?.bins.push({ k: Number(r.k), nFirst: Number(r.n_first), nAll: Number(r.n_all) })
  return [...out.values()]
}
