// Specification revisions as the spec routes answer them and the spec pages read them.
import type { LimitComparison, ParsedLimitCsv, SpecLimitRow } from '../utils/spec-limits'
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

/** GET /api/specs — every product with its revision in force, approved ones still to take effect, and open drafts */
export type SpecOverviewProduct = SpecProduct & { inForce: SpecRevision | null; pending: SpecRevision[]; drafts: SpecRevision[]; revisionCount: number }
export type SpecOverview = { products: SpecOverviewProduct[] }

/** One step's retest limit: attempts allowed (null: no limit) and who set it when. */
export type RetestPolicyStep = { step: string; maxAttempts: number | null; updatedAt: string | null; updatedBy: string | null }
/** GET/PUT /api/products/:partNumber/retest-policy */
export type RetestPolicy = { partNumber: string; policies: RetestPolicyStep[] }

/** POST /api/revisions/:id/limits/import?preview=1 — what the CSV file holds, row by row, and what is wrong in it */
export type LimitsImportPreview = ParsedLimitCsv & { preview: true; applied: false }
/** POST /api/revisions/:id/limits/import — the file replaced the draft's limits */
export type LimitsImportApplied = { preview: false; applied: true; count: number }
