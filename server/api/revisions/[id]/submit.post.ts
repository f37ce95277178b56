import schema from '../../../../shared/schemas/revision-submit.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { idParam } from '../../../utils/route-params'
import { submitRevision } from '../../../services/spec-workflow'

const validate = compileSchema<{ note?: string; reviewerId?: number }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'revision')
  const body = await readValidBody(event, validate)
  return submitRevision(useDb(), actor, id, body)
})
