import type { Knex } from 'knex'
import type { UserRecord } from '../database/repositories/users'
import { writeAudit } from '../database/repositories/audit'
import type { Signature } from '../utils/signature'
import { findProductById, findProductByPartNumber } from '../database/repositories/products'
import {
  clearSubmission, findDraftOf, findSourceRevision, insertRevision, latestEffectiveAt, listLimitsOf, lockRevision, markApproved,
  nextRevisionNumber, replaceLimits, supersedeApproved,
} from '../database/repositories/spec-revisions'
import { normalizeSpecLimit, specLimitsFromCsv, validateSpecLimits, type SpecLimitRow } from '../../shared/utils/spec-limits'
import type { LimitsImportApplied, LimitsImportPreview } from '../../shared/types/spec'
import { bumpCacheVersion } from '../database/repositories/cache-versions'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

// Clock skew allowed between a browser's "now" and the server's when an approval names its effective time.
const PAST_TOLERANCE_MS = 60_000

export type LimitInput = Partial<SpecLimitRow> & Pick<SpecLimitRow, 'step' | 'name' | 'unit'>

/** A new draft holding a copy of the limits in force (or of the next revision to take effect, or none). */
export async function createDraftRevision(db: Knex, actorId: number, partNumber: string, now = new Date()): Promise<{ id: number; revision: number }> {
  return writeTransaction(db, async (trx) => {
    // the product row lock serialises two engineers opening a draft at the same moment
    const product = await findProductByPartNumber(trx, partNumber, { forUpdate: true })
    if (!product) throw new RuleError(404, `No product ${partNumber}.`)
    const draft = await findDraftOf(trx, product.id)
    if (draft) throw new RuleError(409, `Revision ${draft.revision} of ${partNumber} is already a draft; edit it instead.`, [], { draftId: draft.id })
    const source = await findSourceRevision(trx, product.id, now)
    const revision = await nextRevisionNumber(trx, product.id)
    const id = await insertRevision(trx, { productId: product.id, revision, authorId: actorId, note: null })
    const limits = source ? await listLimitsOf(trx, source.id) : []
    await replaceLimits(trx, id, limits)
    await writeAudit(trx, {
      userId: actorId, action: 'create', entity: 'spec_revision', entityId: id,
      after: { partNumber, revision, copiedFromRevision: source?.revision ?? null, limits: limits.length },
    })
    return { id, revision }
  })
}

async function lockDraft(trx: Knex, revisionId: number) {
  const rev = await lockRevision(trx, revisionId)
  if (!rev) throw new RuleError(404, 'No such revision.')
  if (rev.status !== 'draft') throw new RuleError(409, `Revision ${rev.revision} is ${rev.status}; only a draft can change. Open a new revision instead.`)
  const product = (await findProductById(trx, rev.productId))!
  return { rev, product }
}

/**
 * Replaces a draft's whole limit table after checking it against the product's steps and the measurement rules.
 * A submitted draft goes back to a plain draft: what the reviewer was asked to approve no longer exists.
 */
export async function replaceDraftLimits(db: Knex, actorId: number, revisionId: number, input: LimitInput[], action = 'limits_replace'): Promise<SpecLimitRow[]> {
  return writeTransaction(db, async (trx) => {
    const { rev, product } = await lockDraft(trx, revisionId)
    const errors = validateSpecLimits(input, product.steps)
    if (errors.length) throw new RuleError(422, 'Some limits are not valid.', errors)
    const limits = input.map(normalizeSpecLimit)
    const before = await listLimitsOf(trx, revisionId)
    await replaceLimits(trx, revisionId, limits)
    if (rev.submittedAt) await clearSubmission(trx, revisionId)
    const submission = rev.submittedAt ? { before: { submittedAt: rev.submittedAt, submitNote: rev.submitNote, reviewerId: rev.reviewerId }, after: { submittedAt: null } } : { before: {}, after: {} }
    await writeAudit(trx, {
      userId: actorId, action, entity: 'spec_revision', entityId: revisionId,
      before: { revision: rev.revision, limits: before, ...submission.before }, after: { revision: rev.revision, limits, ...submission.after },
    })
    return limits
  })
}

/** Read-only check that a draft could take these limits, for a preview. */
export async function checkDraftAccepts(db: Knex, revisionId: number): Promise<{ steps: string[] }> {
  return writeTransaction(db, async (trx) => ({ steps: (await lockDraft(trx, revisionId)).product.steps }))
}

/**
 * Limits from a CSV file: with `preview` only what would be read; otherwise the draft's limits are replaced, and a
 * file with any wrong row replaces nothing (422 with every row's fault).
 */
export async function importDraftLimits(db: Knex, actorId: number, revisionId: number, text: string, preview: boolean): Promise<LimitsImportPreview | LimitsImportApplied> {
  const { steps } = await checkDraftAccepts(db, revisionId)
  const parsed = specLimitsFromCsv(text, steps)
  if (preview) return { preview: true, applied: false, rows: parsed.rows, errors: parsed.errors }
  if (parsed.errors.length) {
    throw new RuleError(422, `The file has ${parsed.errors.length} error(s); nothing was imported.`,
      parsed.errors.map((e) => ({ pointer: e.pointer, message: `row ${e.row}${e.column ? `, ${e.column}` : ''}: ${e.message}` })),
      { rowErrors: parsed.errors })
  }
  const limits = await replaceDraftLimits(db, actorId, revisionId, parsed.rows.map((r) => r.limit), 'limits_import')
  return { preview: false, applied: true, count: limits.length }
}

/**
 * Approval by a quality engineer who did not write the draft. A draft never submitted may still be approved
 * (the audit row says so); the note is kept with the revision and shown on its page. The approved revision takes effect at
 * `effectiveAt` (now by default); the one it replaces is marked superseded but stays in force until then.
 */
export async function approveRevision(db: Knex, actor: UserRecord, revisionId: number, opts: { effectiveAt?: Date; note?: string; signed?: Signature } = {}, now = new Date()) {
  if (actor.role !== 'quality') throw new RuleError(403, 'Only a quality engineer can approve a specification revision.')
  const result = await writeTransaction(db, async (trx) => {
    const rev = await lockRevision(trx, revisionId)
    if (!rev) throw new RuleError(404, 'No such revision.')
    if (rev.status !== 'draft') throw new RuleError(409, `Revision ${rev.revision} is already ${rev.status}.`)
    if (rev.authorId === actor.id) throw new RuleError(403, 'Separation of duties: the author of a draft cannot approve it; another quality engineer must.')
    const product = (await findProductById(trx, rev.productId))!
    const limits = await listLimitsOf(trx, revisionId)
    if (!limits.length) throw new RuleError(422, 'A revision without limits cannot be approved.')
    const errors = validateSpecLimits(limits, product.steps)
    if (errors.length) throw new RuleError(422, 'Some limits no longer fit the product; fix the draft first.', errors)
    const effectiveAt = opts.effectiveAt ?? now
    if (effectiveAt.getTime() < now.getTime() - PAST_TOLERANCE_MS) {
      throw new RuleError(422, 'A revision cannot take effect in the past.', [{ pointer: '/effectiveAt', message: 'must be now or later' }])
    }
    const latest = await latestEffectiveAt(trx, product.id)
    if (latest && effectiveAt < latest.effectiveAt) {
      throw new RuleError(422, `Revision ${latest.revision} takes effect at ${latest.effectiveAt.toISOString()}; a later revision cannot take effect before it.`,
        [{ pointer: '/effectiveAt', message: `must not be before ${latest.effectiveAt.toISOString()}` }])
    }
    await markApproved(trx, revisionId, { approvedBy: actor.id, approvedAt: now, effectiveAt, note: opts.note })
    const superseded = await supersedeApproved(trx, product.id, revisionId)
    // every instance's cached limits of the catalogue are dropped once this commits
    await bumpCacheVersion(trx, 'catalogue')
    await writeAudit(trx, {
      userId: actor.id, action: 'approve', entity: 'spec_revision', entityId: revisionId,
      before: { status: 'draft', partNumber: product.partNumber, revision: rev.revision, effectiveAt: null, supersedes: [], submittedAt: rev.submittedAt },
      after: {
        status: 'approved', partNumber: product.partNumber, revision: rev.revision, effectiveAt, supersedes: superseded.map((s) => s.revision),
        note: opts.note ?? null, ...(opts.signed ? { signed: opts.signed } : {}),
      },
    })
    for (const s of superseded) {
      await writeAudit(trx, { userId: actor.id, action: 'supersede', entity: 'spec_revision', entityId: s.id, before: { status: 'approved' }, after: { status: 'superseded', by: rev.revision } })
    }
    return { productId: product.id, revision: rev.revision, effectiveAt, superseded: superseded.map((s) => s.id) }
  })
  return result
}
