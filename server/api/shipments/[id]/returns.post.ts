import schema from '../../../../shared/schemas/shipment-return.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { recordReturn, type ReturnInput } from '../../../services/shipments/returns'

const validate = compileSchema<ReturnInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  const r = await recordReturn(useDb(), actor.id, id, body)
  setResponseStatus(event, 201)
  return r
})
