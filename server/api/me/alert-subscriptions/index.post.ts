import schema from '../../../../shared/schemas/alert-subscription.schema.json'
import type { AlertSubscriptionTarget } from '../../../../shared/types/alert'
import { compileSchema } from '../../../utils/run-validator'
import { follow } from '../../../services/alerts/subscriptions'

const validate = compileSchema<{ target: AlertSubscriptionTarget; targetId: number }>(schema)

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const body = await readValidBody(event, validate)
  const { subscription, created } = await follow(useDb(), user.id, body.target, body.targetId)
  // following again answers the existing subscription with 200
  setResponseStatus(event, created ? 201 : 200)
  return { subscription }
})
