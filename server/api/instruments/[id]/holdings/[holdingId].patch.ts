import schema from '../../../../../shared/schemas/instrument-holding.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { correctHolding, type HoldingDates } from '../../../../services/calibration/history'

const validate = compileSchema<HoldingDates>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'instrument')
  const holdingId = idParam(event, 'holdingId', 'holding')
  const body = await readValidBody(event, validate)
  return { holding: await correctHolding(useDb(), actor.id, id, holdingId, body) }
})
