import schema from '../../../../shared/schemas/revision-discard.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { idParam } from '../../../utils/route-params'
import { discardRevision } from '../../../services/spec-workflow'

const validate = compileSchema<{ note?: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'revision')
  const body = await readValidBody(event, validate)
  return discardRevision(useDb(), actor, id, body)
})
