// Specification revisions as the spec routes answer them and the spec pages read them.
import type { LimitComparison, SpecLimitRow } from '../utils/spec-limits'
import type { RevisionFlow, RevisionStatus } from './spec-workflow'

export type SpecProduct = {
  id: number; partNumber: string; name: string; multiplier: number; inputHz: number; outputHz: number
  steps: string[]; jitterBandLoHz: number; jitterBandHiHz: number; updatedAt: string
}

/** A revision with its way to approval (submission, approval note, discard) and its place in time. */
export type SpecRevision = RevisionFlow & {
  productId: number; partNumber: string; effectiveAt: string | null; createdAt: string
  limitCount: number
  /** the revision judging runs now */
  inForce: boolean
  /** approved, taking effect later */
  pending: boolean
}

/** GET /api/revisions/:id */
export type RevisionDetail = { revision: SpecRevision; product: SpecProduct; limits: SpecLimitRow[] }
/** GET /api/products/:partNumber/revisions — newest first */
export type ProductRevisions = { product: SpecProduct; revisions: SpecRevision[] }

export type RevisionBrief = { id: number; revision: number; status: RevisionStatus; effectiveAt: string | null }
/** GET /api/revisions/:id/compare/:other — what changes from :id to :other */
export type RevisionComparison = LimitComparison & { partNumber: string; from: RevisionBrief; to: RevisionBrief }
