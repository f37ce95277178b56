import schema from '../../../../shared/schemas/shipment-return.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { recordReturn, type ReturnInput } from '../../../services/shipments/returns'
import { underRules } from '../../../services/rule-error'

const validate = compileSchema<ReturnInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  const r = await underRules(() => recordReturn(useDb(), actor.id, id, body))
  setResponseStatus(event, 201)
  return r
})
