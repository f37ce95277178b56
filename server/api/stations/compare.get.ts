import { stationComparison } from '../../services/analytics/station-compare'
import { parseStationCompareQuery } from '../../utils/series-query'

export default defineEventHandler((event) => stationComparison(useDb(), parseStationCompareQuery(getQuery(event))))
