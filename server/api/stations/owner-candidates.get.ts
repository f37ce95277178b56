import { ownerCandidates } from '../../services/station-owner'

export default defineEventHandler(async () => ownerCandidates(useDb()))
