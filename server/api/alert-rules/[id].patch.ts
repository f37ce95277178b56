import schema from '../../../shared/schemas/alert-rule-update.schema.json'
import type { AlertRuleChange } from '../../../shared/types/alert'
import { compileSchema } from '../../utils/run-validator'
import { changeRule } from '../../services/alerts/rules'

const validate = compileSchema<AlertRuleChange>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'alert rule')
  const body = await readValidBody(event, validate)
  return { rule: await changeRule(useDb(), actor.id, id, body) }
})
