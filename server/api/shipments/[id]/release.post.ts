import schema from '../../../../shared/schemas/shipment-release.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { releaseShipment } from '../../../services/shipments/release'

const validate = compileSchema<{ password?: string; deviation?: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  return releaseShipment(useDb(), actor.id, id, { deviation: body.deviation, signed })
})
