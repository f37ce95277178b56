import { impactDetail } from '../../services/calibration/impact-views'
import { parseImpactUnitsPage } from '../../utils/impact-query'

export default defineEventHandler(async (event) => {
  requireUser(event)
  const id = idParam(event, 'id', 'calibration impact review')
  return impactDetail(useDb(), id, parseImpactUnitsPage(getQuery(event)))
})
