import schema from '../../../../shared/schemas/lot-release.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { changeLotStatus } from '../../../services/lot-status'

const validate = compileSchema<{ deviation?: string; password?: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  const status = await changeLotStatus(useDb(), actor.id, code, 'release', body.deviation?.trim() || undefined, undefined, signed)
  return { code, status }
})
