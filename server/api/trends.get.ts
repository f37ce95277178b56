import { lotTrends } from '../services/analytics/trends'
import { parseTrendsQuery } from '../utils/series-query'

export default defineEventHandler((event) => lotTrends(useDb(), parseTrendsQuery(getQuery(event))))
