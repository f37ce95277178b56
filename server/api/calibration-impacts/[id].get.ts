import { impactDetail } from '../../services/calibration/impact-views'
import { underRules } from '../../services/rule-error'

export default defineEventHandler(async (event) => {
  requireUser(event)
  const id = idParam(event, 'id', 'calibration impact review')
  return underRules(() => impactDetail(useDb(), id, getQuery(event)))
})
