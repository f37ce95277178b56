import { awaitingApproval } from '../../services/spec-workflow'
import type { AwaitingApprovalList } from '../../../shared/types/spec-workflow'

/** Submitted drafts the signed-in quality user may approve, oldest submission first. */
export default defineEventHandler(async (event): Promise<AwaitingApprovalList> => {
  const actor = requireUser(event)
  return { revisions: await awaitingApproval(useDb(), actor) }
})
