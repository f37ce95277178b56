import { underRules } from '../../../services/rule-error'
import { searchPortalUnits } from '../../../services/portal/search'

/** Shipped serials by prefix: a customer's own, or every shipped unit for staff. */
export default defineEventHandler(async (event) => {
  const scope = customerScope(requireUser(event))
  return underRules(() => searchPortalUnits(useDb(), scope, getQuery(event)))
})
