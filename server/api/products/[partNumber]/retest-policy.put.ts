import schema from '../../../../shared/schemas/retest-policy.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { setRetestPolicy, type PolicyInput } from '../../../services/retest'

const validate = compileSchema<PolicyInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  return setRetestPolicy(useDb(), actor.id, partNumber, body)
})
