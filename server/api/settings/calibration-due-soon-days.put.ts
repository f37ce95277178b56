import schema from '../../../shared/schemas/calibration-due-soon-days.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { setCalibrationDueSoonDays } from '../../services/settings'

const validate = compileSchema<{ days: number }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  return setCalibrationDueSoonDays(useDb(), actor.id, body.days)
})
