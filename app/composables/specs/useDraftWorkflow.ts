import type { AwaitingApprovalList, ReviewerList, RevisionStep } from '#shared/types/spec-workflow'

/** Problem details of a refused request, as one line for the page. */
export function refusal(e: any, fallback: string): string {
  return [e?.data?.detail, ...(e?.data?.errors ?? []).map((x: any) => x.message)].filter(Boolean).join(' ') || fallback
}

/** Submitting and discarding one draft; `mayAddress` fetches the quality users it can be addressed to. */
export function useDraftWorkflow(revisionId: () => number, mayAddress: () => boolean) {
  const { data: reviewers } = useFetch<ReviewerList>('/api/specs/reviewers', { default: () => ({ reviewers: [] }), immediate: mayAddress() })
  const busy = ref(false)
  async function send(action: 'submit' | 'discard', body: Record<string, unknown>): Promise<RevisionStep> {
    busy.value = true
    try {
      return await $fetch<RevisionStep>(`/api/revisions/${revisionId()}/${action}`, { method: 'POST', body })
    } finally {
      busy.value = false
    }
  }
  return {
    reviewers, busy,
    submit: (note: string, reviewerId: number | null) => send('submit', { ...(note.trim() ? { note: note.trim() } : {}), ...(reviewerId ? { reviewerId } : {}) }),
    discard: (note: string) => send('discard', note.trim() ? { note: note.trim() } : {}),
  }
}

/** Submitted drafts waiting for the signed-in quality user. */
export function useAwaitingApproval() {
  return useFetch<AwaitingApprovalList>('/api/specs/awaiting-approval', { default: () => ({ revisions: [] }) })
}
