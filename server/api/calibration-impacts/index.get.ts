import { impactList } from '../../services/calibration/impact-views'

export default defineEventHandler(async (event) => impactList(useDb(), requireUser(event).id))
