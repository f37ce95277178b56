import schema from '../../../../shared/schemas/engineering-pattern.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { setEngineeringPattern } from '../../../services/lot-kind'

const validate = compileSchema<{ pattern: string | null }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  return setEngineeringPattern(useDb(), actor.id, partNumber, body)
})
