import { stationComparison } from '../../services/analytics/station-compare'

export default defineEventHandler((event) => stationComparison(useDb(), getQuery(event)))
