import schema from '../../../../shared/schemas/certificate-reissue.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { reissueCertificate } from '../../../services/shipments/certificate-actions'

const validate = compileSchema<{ password?: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const number = getRouterParam(event, 'number', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  const r = await reissueCertificate(useDb(), actor.id, number, signed)
  setResponseStatus(event, 201)
  return r
})
