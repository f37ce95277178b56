import schema from '../../../../shared/schemas/spec-limits.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { idParam } from '../../../utils/route-params'
import { replaceDraftLimits, type LimitInput } from '../../../services/spec-revisions'

const validate = compileSchema<{ limits: LimitInput[] }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'revision')
  const body = await readValidBody(event, validate)
  const limits = await replaceDraftLimits(useDb(), actor.id, id, body.limits)
  return { limits }
})
