import schema from '../../../../shared/schemas/lot-kind.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { setLotKind } from '../../../services/lot-kind'

const validate = compileSchema<{ engineering: boolean; reason: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  return setLotKind(useDb(), actor.id, code, body)
})
