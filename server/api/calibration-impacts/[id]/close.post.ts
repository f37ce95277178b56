import schema from '../../../../shared/schemas/calibration-impact-close.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { closeReview } from '../../../services/calibration/impact-decisions'

const validate = compileSchema<Record<string, never>>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'calibration impact review')
  await readValidBody(event, validate)
  return closeReview(useDb(), actor.id, id)
})
