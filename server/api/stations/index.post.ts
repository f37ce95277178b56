import schema from '../../../shared/schemas/station-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { createStation, type NewStation } from '../../services/stations'

const validate = compileSchema<NewStation>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const created = await createStation(useDb(), actor.id, body)
  setResponseStatus(event, 201)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return created
})
