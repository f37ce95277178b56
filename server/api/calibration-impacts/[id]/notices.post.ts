import schema from '../../../../shared/schemas/calibration-impact-notices.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { sendNotices } from '../../../services/calibration/impact-notices'

const validate = compileSchema<{ password?: string; resend?: boolean }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'calibration impact review')
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  return sendNotices(useDb(), actor.id, id, { resend: body.resend === true, signed })
})
