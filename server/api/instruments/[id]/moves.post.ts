import schema from '../../../../shared/schemas/instrument-move.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { moveInstrument, type InstrumentMove } from '../../../services/calibration/history'

const validate = compileSchema<InstrumentMove>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'instrument')
  const body = await readValidBody(event, validate)
  return { move: await moveInstrument(useDb(), actor.id, id, body) }
})
