import schema from '../../../shared/schemas/instrument-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { addInstrument, type NewInstrument } from '../../services/calibration/history'
import { underRules } from '../../services/rule-error'

const validate = compileSchema<NewInstrument>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const instrument = await underRules(() => addInstrument(useDb(), actor.id, body))
  setResponseStatus(event, 201)
  return { instrument }
})
