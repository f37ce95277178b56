import type { Knex } from 'knex'
import type { SpecLimitRow } from '../../../shared/utils/spec-limits'

export type RevisionStatus = 'draft' | 'approved' | 'superseded' | 'discarded'
export type Person = { id: number; name: string } | null

export type RevisionRecord = {
  id: number; productId: number; partNumber: string; revision: number; status: RevisionStatus
  effectiveAt: Date | null; author: Person; approvedBy: Person; approvedAt: Date | null; note: string | null; createdAt: Date
  limitCount: number
  /** set while a draft awaits approval; cleared when its limits change */
  submittedAt: Date | null; submittedBy: Person; submitNote: string | null; reviewer: Person
  discardedAt: Date | null; discardedBy: Person; discardNote: string | null
}

const EFFECTIVE: RevisionStatus[] = ['approved', 'superseded']

function person(id: number | null, name: string | null): Person {
  return id == null ? null : { id, name: name ?? '' }
}

function toRevision(r: any): RevisionRecord {
  return {
    id: r.id, productId: r.product_id, partNumber: r.part_number, revision: r.revision, status: r.status,
    effectiveAt: r.effective_at ?? null, author: person(r.author_id, r.author_name), approvedBy: person(r.approved_by, r.approver_name),
    approvedAt: r.approved_at ?? null, note: r.note ?? null, createdAt: r.created_at, limitCount: Number(r.limit_count ?? 0),
    submittedAt: r.submitted_at ?? null, submittedBy: person(r.submitted_by, r.submitter_name), submitNote: r.submit_note ?? null,
    reviewer: person(r.reviewer_id, r.reviewer_name),
    discardedAt: r.discarded_at ?? null, discardedBy: person(r.discarded_by, r.discarder_name), discardNote: r.discard_note ?? null,
  }
}

function base(db: Knex) {
  return db('spec_revisions as r').join('products as p', 'p.id', 'r.product_id')
    .leftJoin('users as a', 'a.id', 'r.author_id').leftJoin('users as q', 'q.id', 'r.approved_by')
    .leftJoin('users as s', 's.id', 'r.submitted_by').leftJoin('users as v', 'v.id', 'r.reviewer_id').leftJoin('users as d', 'd.id', 'r.discarded_by')
    .select('r.*', 'p.part_number', 'a.name as author_name', 'q.name as approver_name',
      's.name as submitter_name', 'v.name as reviewer_name', 'd.name as discarder_name',
      db('spec_limits as l').count('*').whereRaw('l.revision_id = r.id').as('limit_count'))
}

export async function listRevisionsOfProduct(db: Knex, productId: number): Promise<RevisionRecord[]> {
  return (await base(db).where('r.product_id', productId).orderBy('r.revision', 'desc')).map(toRevision)
}

export async function listAllRevisions(db: Knex): Promise<RevisionRecord[]> {
  return (await base(db).orderBy('p.part_number').orderBy('r.revision', 'desc')).map(toRevision)
}

export async function findRevision(db: Knex, id: number): Promise<RevisionRecord | undefined> {
  const r = await base(db).where('r.id', id).first()
  return r ? toRevision(r) : undefined
}

export type LockedRevision = {
  id: number; productId: number; status: RevisionStatus; authorId: number | null; revision: number
  submittedAt: Date | null; submitNote: string | null; reviewerId: number | null
}

/** Locks the revision row for the rest of the transaction and returns its product, status and submission. */
export async function lockRevision(trx: Knex, id: number): Promise<LockedRevision | undefined> {
  const r = await trx('spec_revisions').where({ id }).forUpdate().first('id', 'product_id', 'status', 'author_id', 'revision', 'submitted_at', 'submit_note', 'reviewer_id')
  return r ? {
    id: r.id, productId: r.product_id, status: r.status, authorId: r.author_id, revision: r.revision,
    submittedAt: r.submitted_at ?? null, submitNote: r.submit_note ?? null, reviewerId: r.reviewer_id ?? null,
  } : undefined
}

/** Submitted drafts a quality user may approve: not their own, addressed to them or to no one in particular. */
export async function listAwaitingApproval(db: Knex, reviewerId: number): Promise<RevisionRecord[]> {
  return (await base(db).where('r.status', 'draft').whereNotNull('r.submitted_at')
    .where((w) => { w.whereNull('r.author_id').orWhereNot('r.author_id', reviewerId) })
    .where((w) => { w.whereNull('r.reviewer_id').orWhere('r.reviewer_id', reviewerId) })
    .orderBy('r.submitted_at')).map(toRevision)
}

export async function markSubmitted(trx: Knex, id: number, s: { by: number; at: Date; note: string | null; reviewerId: number | null }): Promise<void> {
  await trx('spec_revisions').where({ id, status: 'draft' }).update({ submitted_at: s.at, submitted_by: s.by, submit_note: s.note, reviewer_id: s.reviewerId })
}

/** Takes a draft back out of the approvers' lists (its limits changed after submission). */
export async function clearSubmission(trx: Knex, id: number): Promise<void> {
  await trx('spec_revisions').where({ id }).update({ submitted_at: null, submitted_by: null, submit_note: null, reviewer_id: null })
}

export async function markDiscarded(trx: Knex, id: number, d: { by: number; at: Date; note: string | null }): Promise<void> {
  await trx('spec_revisions').where({ id, status: 'draft' }).update({ status: 'discarded', discarded_at: d.at, discarded_by: d.by, discard_note: d.note })
}

export async function findDraftOf(db: Knex, productId: number): Promise<{ id: number; revision: number } | undefined> {
  return db('spec_revisions').where({ product_id: productId, status: 'draft' }).orderBy('revision', 'desc').first('id', 'revision')
}

/** The revision in force at `at`: the latest effective one not after it. */
export async function findRevisionInForce(db: Knex, productId: number, at: Date): Promise<{ id: number; revision: number } | undefined> {
  return db('spec_revisions').where({ product_id: productId }).whereIn('status', EFFECTIVE).where('effective_at', '<=', at)
    .orderBy('effective_at', 'desc').orderBy('revision', 'desc').first('id', 'revision')
}

/** The revision in force at `at`, else the earliest one still to take effect. */
export async function findSourceRevision(db: Knex, productId: number, at: Date): Promise<{ id: number; revision: number } | undefined> {
  const inForce = await findRevisionInForce(db, productId, at)
  if (inForce) return inForce
  return db('spec_revisions').where({ product_id: productId }).whereIn('status', EFFECTIVE).orderBy('effective_at').first('id', 'revision')
}

export async function latestEffectiveAt(db: Knex, productId: number): Promise<{ revision: number; effectiveAt: Date } | undefined> {
  const r = await db('spec_revisions').where({ product_id: productId }).whereIn('status', EFFECTIVE).orderBy('effective_at', 'desc').first('revision', 'effective_at')
  return r ? { revision: r.revision, effectiveAt: r.effective_at } : undefined
}

export async function nextRevisionNumber(trx: Knex, productId: number): Promise<number> {
  const r = await trx('spec_revisions').where({ product_id: productId }).max<{ n: number | null }[]>({ n: 'revision' })
  return Number(r[0]?.n ?? 0) + 1
}

export async function insertRevision(trx: Knex, r: { productId: number; revision: number; authorId: number; note: string | null }): Promise<number> {
  const [id] = await trx('spec_revisions').insert({ product_id: r.productId, revision: r.revision, status: 'draft', author_id: r.authorId, note: r.note })
  return id!
}

function toLimitRow(l: any): SpecLimitRow {
  return {
    step: l.step, name: l.name, qualifier: l.qualifier, lsl: l.lsl, usl: l.usl, target: l.target, unit: l.unit,
    required: !!l.required, rule: l.rule, defaultUncertainty: l.default_uncertainty, key: !!l.key_characteristic,
  }
}

export async function listLimitsOf(db: Knex, revisionId: number): Promise<SpecLimitRow[]> {
  return (await db('spec_limits').where({ revision_id: revisionId }).orderBy('id')).map(toLimitRow)
}

export async function listLimitsOfMany(db: Knex, revisionIds: number[]): Promise<Map<number, SpecLimitRow[]>> {
  const out = new Map<number, SpecLimitRow[]>(revisionIds.map((id) => [id, []]))
  if (!revisionIds.length) return out
  for (const l of await db('spec_limits').whereIn('revision_id', revisionIds).orderBy('id')) out.get(l.revision_id)!.push(toLimitRow(l))
  return out
}

/** Replaces every limit of a revision, keeping the given order. */
export async function replaceLimits(trx: Knex, revisionId: number, limits: readonly SpecLimitRow[]): Promise<void> {
  await trx('spec_limits').where({ revision_id: revisionId }).delete()
  if (!limits.length) return
  await trx('spec_limits').insert(limits.map((l) => ({
    revision_id: revisionId, step: l.step, name: l.name, qualifier: l.qualifier, lsl: l.lsl, usl: l.usl, target: l.target, unit: l.unit,
    required: l.required, rule: l.rule, default_uncertainty: l.defaultUncertainty, key_characteristic: l.key,
  })))
}

export async function markApproved(trx: Knex, id: number, a: { approvedBy: number; approvedAt: Date; effectiveAt: Date; note?: string }): Promise<void> {
  const row: Record<string, unknown> = { status: 'approved', approved_by: a.approvedBy, approved_at: a.approvedAt, effective_at: a.effectiveAt }
  if (a.note !== undefined) row.note = a.note
  await trx('spec_revisions').where({ id, status: 'draft' }).update(row)
}

/** Marks every other approved revision of the product superseded; returns their ids and numbers. */
export async function supersedeApproved(trx: Knex, productId: number, exceptId: number): Promise<{ id: number; revision: number }[]> {
  const rows = await trx('spec_revisions').where({ product_id: productId, status: 'approved' }).whereNot('id', exceptId).forUpdate().select('id', 'revision')
  if (rows.length) await trx('spec_revisions').whereIn('id', rows.map((r: any) => r.id)).update({ status: 'superseded' })
  return rows
}

/** Steps used by limits of the product's drafts, approved revisions and the listed others, with the revision numbers. */
export async function stepsInUse(db: Knex, productId: number, alsoRevisionIds: number[] = []): Promise<Map<string, number[]>> {
  const rows = await db('spec_limits as l').join('spec_revisions as r', 'r.id', 'l.revision_id')
    .where('r.product_id', productId)
    .where((w) => { w.whereIn('r.status', ['draft', 'approved']); if (alsoRevisionIds.length) w.orWhereIn('r.id', alsoRevisionIds) })
    .distinct('l.step', 'r.revision')
  const out = new Map<string, number[]>()
  for (const r of rows) out.set(r.step, [...(out.get(r.step) ?? []), r.revision])
  return out
}
