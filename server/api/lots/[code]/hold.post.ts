import schema from '../../../../shared/schemas/lot-hold.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { changeLotStatus } from '../../../services/lot-status'

const validate = compileSchema<{ reason: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  const status = await changeLotStatus(useDb(), actor.id, code, 'hold', body.reason.trim())
  return { code, status }
})
