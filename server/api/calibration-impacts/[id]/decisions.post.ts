import schema from '../../../../shared/schemas/calibration-impact-decisions.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { recordDecisions, type DecisionsInput } from '../../../services/calibration/impact-decisions'

const validate = compileSchema<DecisionsInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'calibration impact review')
  const body = await readValidBody(event, validate)
  return recordDecisions(useDb(), actor.id, id, body)
})
