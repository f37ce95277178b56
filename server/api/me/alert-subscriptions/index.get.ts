import { mySubscriptions } from '../../../services/alerts/subscriptions'

export default defineEventHandler(async (event) => ({ subscriptions: await mySubscriptions(useDb(), requireUser(event).id) }))
