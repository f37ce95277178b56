import schema from '../../../../shared/schemas/station-owner.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { setStationOwner } from '../../../services/station-owner'

const validate = compileSchema<{ ownerUserId: number | null }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = Number(getRouterParam(event, 'id'))
  if (!Number.isInteger(id) || id <= 0) throw problem(404, 'No such station.')
  const body = await readValidBody(event, validate)
  return setStationOwner(useDb(), actor.id, id, body.ownerUserId)
})
