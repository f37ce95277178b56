import schema from '../../../shared/schemas/instrument-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { addInstrument, type NewInstrument } from '../../services/calibration/history'

const validate = compileSchema<NewInstrument>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const instrument = await addInstrument(useDb(), actor.id, body)
  setResponseStatus(event, 201)
  return { instrument }
})
