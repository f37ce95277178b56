import schema from '../../../../shared/schemas/certificate-revoke.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { revokeCertificate } from '../../../services/shipments/certificate-actions'

const validate = compileSchema<{ password?: string; reason: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const number = getRouterParam(event, 'number', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  return revokeCertificate(useDb(), actor.id, number, body.reason, signed)
})
