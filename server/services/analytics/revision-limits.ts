// The limits each stored value was judged by: measurements and their statistics carry the revision id, and the
// revision's own spec_limits give the limits its capability is figured against (never the revision in force now).
import type { Knex } from 'knex'
import { listEffectiveRevisions, type RevisionInForce, type SpecLimit } from '../../database/repositories/spec-lookup'
import type { JudgedRevision, RevisionTag } from '../../../shared/types/capability'
import { limitInForce } from '../../../shared/utils/phase-noise-mask'

export type ParameterKey = { step: string; name: string; qualifier: number }

export type RevisionBook = {
  /** the revision number of an id; null for 0 (stored without a revision) or an id not among the product's */
  tag(revisionId: number): RevisionTag
  /** the limit of one parameter in one revision */
  limitFor(revisionId: number, key: ParameterKey): SpecLimit | undefined
  /** the given ids as revisions, oldest first (values stored without a revision first of all) */
  judged(revisionIds: Iterable<number>): JudgedRevision[]
  /** the id of a revision number of this product */
  idOf(revision: number): number | undefined
}

export function bookOf(revisions: RevisionInForce[]): RevisionBook {
  const byId = new Map(revisions.map((r) => [r.id, r]))
  const order = (id: number) => { const r = byId.get(id); return r ? r.effectiveAt.getTime() * 1e3 + r.revision : -Infinity }
  return {
    tag: (revisionId) => ({ revisionId, revision: byId.get(revisionId)?.revision ?? null, approvedAt: byId.get(revisionId)?.approvedAt?.toISOString() ?? null }),
    // the mask margin of a sweep has no limit row of its own: its limit follows from the revision's phase-noise limits
    limitFor: (revisionId, k) => limitInForce(byId.get(revisionId)?.limits ?? [], k) as SpecLimit | undefined,
    judged: (ids) => [...new Set(ids)].sort((a, b) => order(a) - order(b) || a - b).map((id) => ({
      revisionId: id, revision: byId.get(id)?.revision ?? null, approvedAt: byId.get(id)?.approvedAt?.toISOString() ?? null, effectiveAt: byId.get(id)?.effectiveAt.toISOString() ?? null,
    })),
    idOf: (revision) => revisions.find((r) => r.revision === revision)?.id,
  }
}

export async function revisionBook(db: Knex, productId: number): Promise<RevisionBook> {
  return bookOf(await listEffectiveRevisions(db, productId))
}

/** Sorts revision tags oldest first by revision number, values without one first. */
export function byRevision(a: RevisionTag, b: RevisionTag): number {
  return (a.revision ?? -1) - (b.revision ?? -1)
}
