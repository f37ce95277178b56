import { portalUnitView } from '../../../../services/portal/unit-view'

const NAME = /^[A-Za-z0-9._-]{1,64}$/

/** One shipped unit, keyed by part and serial; a unit the caller never received is "no such unit", like one that does not exist. */
export default defineEventHandler(async (event) => {
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const serial = getRouterParam(event, 'serial', { decode: true }) ?? ''
  const view = NAME.test(partNumber) && NAME.test(serial)
    ? await portalUnitView(useDb(), customerScope(requireUser(event)), partNumber, serial)
    : null
  if (!view) throw problem(404, 'No such unit.')
  return view
})
