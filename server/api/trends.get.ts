import { lotTrends } from '../services/analytics/trends'

export default defineEventHandler((event) => lotTrends(useDb(), getQuery(event)))
