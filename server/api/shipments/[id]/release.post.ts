import schema from '../../../../shared/schemas/shipment-release.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { releaseShipment } from '../../../services/shipments/release'
import { underRules } from '../../../services/rule-error'

const validate = compileSchema<{ password?: string; deviation?: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  return underRules(() => releaseShipment(useDb(), actor.id, id, { deviation: body.deviation, signed }))
})
