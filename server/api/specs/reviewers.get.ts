import { listQualityReviewers } from '../../services/spec-workflow'
import type { ReviewerList } from '../../../shared/types/spec-workflow'

/** Quality users a draft can be addressed to. */
export default defineEventHandler(async (): Promise<ReviewerList> => ({ reviewers: await listQualityReviewers(useDb()) }))
