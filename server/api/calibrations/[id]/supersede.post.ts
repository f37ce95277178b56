import schema from '../../../../shared/schemas/calibration-supersede.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { supersedeCalibration, type Supersession } from '../../../services/calibration/history'

const validate = compileSchema<Supersession>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'calibration record')
  const body = await readValidBody(event, validate)
  return { record: await supersedeCalibration(useDb(), actor.id, id, body) }
})
