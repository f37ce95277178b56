import { searchPortalUnits } from '../../../services/portal/search'
import { parsePortalUnitQuery } from '../../../utils/portal-query'

/** Shipped serials by prefix: a customer's own, or every shipped unit for staff. */
export default defineEventHandler(async (event) => {
  const scope = customerScope(requireUser(event))
  return searchPortalUnits(useDb(), scope, parsePortalUnitQuery(getQuery(event)))
})
