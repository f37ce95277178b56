import { alertCount } from '../../services/alerts/firings'

export default defineEventHandler((event) => alertCount(useDb(), requireUser(event).id))
