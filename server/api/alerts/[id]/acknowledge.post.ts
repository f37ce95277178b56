import schema from '../../../../shared/schemas/alert-acknowledge.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { acknowledgeAlert } from '../../../services/alerts/firings'

const validate = compileSchema<{ comment?: string }>(schema)

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const id = idParam(event, 'id', 'alert')
  const body = await readValidBody(event, validate)
  return { alert: await acknowledgeAlert(useDb(), user.id, id, body.comment) }
})
