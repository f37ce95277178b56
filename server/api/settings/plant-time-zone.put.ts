import schema from '../../../shared/schemas/plant-time-zone.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { setPlantTimeZone } from '../../services/settings'

const validate = compileSchema<{ zone: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  return setPlantTimeZone(useDb(), actor.id, body.zone)
})
