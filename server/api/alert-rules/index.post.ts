import schema from '../../../shared/schemas/alert-rule-create.schema.json'
import type { AlertRuleInput } from '../../../shared/types/alert'
import { compileSchema } from '../../utils/run-validator'
import { createRule } from '../../services/alerts/rules'

const validate = compileSchema<AlertRuleInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const rule = await createRule(useDb(), actor.id, body)
  setResponseStatus(event, 201)
  return { rule }
})
