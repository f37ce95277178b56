/** A submitted draft waiting for a quality user's approval (GET /api/specs/awaiting-approval). */
export type AwaitingApproval = {
  id: number
  partNumber: string
  revision: number
  author: { id: number; name: string } | null
  submittedAt: string
  submittedBy: { id: number; name: string } | null
  note: string | null
  /** named reviewer, or null when any quality user may take it */
  reviewer: { id: number; name: string } | null
  limitCount: number
}

export type AwaitingApprovalList = { revisions: AwaitingApproval[] }

/** Quality users a draft can be addressed to (GET /api/specs/reviewers). */
export type ReviewerList = { reviewers: { id: number; name: string }[] }

/** Answer to a submission or a discard. */
export type RevisionStep = { id: number; revision: number; status: 'draft' | 'discarded'; submittedAt: string | null; discardedAt: string | null }

export type SpecPerson = { id: number; name: string } | null
export type RevisionStatus = 'draft' | 'approved' | 'superseded' | 'discarded'

/** The workflow fields of a revision as GET /api/revisions/:id returns them. */
export type RevisionFlow = {
  id: number
  revision: number
  status: RevisionStatus
  author: SpecPerson
  approvedBy: SpecPerson
  approvedAt: string | null
  /** the approval note */
  note: string | null
  submittedAt: string | null
  submittedBy: SpecPerson
  submitNote: string | null
  reviewer: SpecPerson
  discardedAt: string | null
  discardedBy: SpecPerson
  discardNote: string | null
}
