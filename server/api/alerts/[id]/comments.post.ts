import schema from '../../../../shared/schemas/alert-comment.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { commentOnAlert } from '../../../services/alerts/firings'

const validate = compileSchema<{ body: string }>(schema)

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const id = idParam(event, 'id', 'alert')
  const body = await readValidBody(event, validate)
  const alert = await commentOnAlert(useDb(), user.id, id, body.body)
  setResponseStatus(event, 201)
  return { alert }
})
