import type { Knex } from 'knex'
import type { UserRecord } from '../database/repositories/users'
import { findUserById, listQualityReviewers } from '../database/repositories/users'
import { writeAudit } from '../database/repositories/audit'
import { findProductById } from '../database/repositories/products'
import { listAwaitingApproval, listLimitsOf, lockRevision, markDiscarded, markSubmitted } from '../database/repositories/spec-revisions'
import { validateSpecLimits } from '../../shared/utils/spec-limits'
import type { AwaitingApproval, RevisionStep } from '../../shared/types/spec-workflow'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

const WRITERS = ['admin', 'engineer']

async function lockOpenDraft(trx: Knex, revisionId: number) {
  const rev = await lockRevision(trx, revisionId)
  if (!rev) throw new RuleError(404, 'No such revision.')
  if (rev.status !== 'draft') throw new RuleError(409, `Revision ${rev.revision} is ${rev.status}; only a draft can be submitted or discarded.`)
  return rev
}

/**
 * Puts a draft in front of quality: any quality user but its author, or the one named. The limits must already
 * be approvable, so a reviewer never receives a draft that approval would refuse.
 */
export async function submitRevision(db: Knex, actor: UserRecord, revisionId: number, opts: { note?: string; reviewerId?: number }, now = new Date()): Promise<RevisionStep> {
  if (!WRITERS.includes(actor.role)) throw new RuleError(403, 'Only an engineer or an administrator submits a draft.')
  return writeTransaction(db, async (trx) => {
    const rev = await lockOpenDraft(trx, revisionId)
    if (rev.submittedAt) throw new RuleError(409, `Revision ${rev.revision} was already submitted ${rev.submittedAt.toISOString()}.`)
    const product = (await findProductById(trx, rev.productId))!
    const limits = await listLimitsOf(trx, revisionId)
    if (!limits.length) throw new RuleError(422, 'A draft without limits cannot be submitted; add limits first.')
    const errors = validateSpecLimits(limits, product.steps)
    if (errors.length) throw new RuleError(422, 'Some limits do not fit the product; fix the draft first.', errors)
    let reviewerId: number | null = null
    if (opts.reviewerId !== undefined) {
      const reviewer = await findUserById(trx, opts.reviewerId)
      if (!reviewer || reviewer.role !== 'quality' || reviewer.disabled) {
        throw new RuleError(422, 'The reviewer must be an active quality user.', [{ pointer: '/reviewerId', message: 'not an active quality user' }])
      }
      if (reviewer.id === rev.authorId) {
        throw new RuleError(422, 'The author of a draft cannot approve it; name another quality user.', [{ pointer: '/reviewerId', message: 'is the author of this draft' }])
      }
      reviewerId = reviewer.id
    }
    const note = opts.note?.trim() || null
    await markSubmitted(trx, revisionId, { by: actor.id, at: now, note, reviewerId })
    await writeAudit(trx, {
      userId: actor.id, action: 'submit', entity: 'spec_revision', entityId: revisionId,
      before: { status: 'draft', submitted: false }, after: { status: 'draft', submitted: true, partNumber: product.partNumber, revision: rev.revision, note, reviewerId, limits: limits.length },
    })
    return { id: revisionId, revision: rev.revision, status: 'draft', submittedAt: now.toISOString(), discardedAt: null }
  })
}

/** Gives up a draft: kept, read-only, listed apart. Its author, an administrator or a quality user may. */
export async function discardRevision(db: Knex, actor: UserRecord, revisionId: number, opts: { note?: string }, now = new Date()): Promise<RevisionStep> {
  return writeTransaction(db, async (trx) => {
    const rev = await lockOpenDraft(trx, revisionId)
    if (actor.role === 'engineer' && rev.authorId !== actor.id) {
      throw new RuleError(403, 'Only the author of a draft, an administrator or a quality user can discard it.')
    }
    const product = (await findProductById(trx, rev.productId))!
    const note = opts.note?.trim() || null
    await markDiscarded(trx, revisionId, { by: actor.id, at: now, note })
    await writeAudit(trx, {
      userId: actor.id, action: 'discard', entity: 'spec_revision', entityId: revisionId,
      before: { status: 'draft', submitted: !!rev.submittedAt }, after: { status: 'discarded', partNumber: product.partNumber, revision: rev.revision, note },
    })
    return { id: revisionId, revision: rev.revision, status: 'discarded', submittedAt: rev.submittedAt?.toISOString() ?? null, discardedAt: now.toISOString() }
  })
}

export async function awaitingApproval(db: Knex, actor: UserRecord): Promise<AwaitingApproval[]> {
  if (actor.role !== 'quality') return []
  return (await listAwaitingApproval(db, actor.id)).map((r) => ({
    id: r.id, partNumber: r.partNumber, revision: r.revision, author: r.author, submittedAt: r.submittedAt!.toISOString(),
    submittedBy: r.submittedBy, note: r.submitNote, reviewer: r.reviewer, limitCount: r.limitCount,
  }))
}

export { listQualityReviewers }
