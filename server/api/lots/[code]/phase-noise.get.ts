import { lotPhaseNoise } from '../../../services/analytics/phase-noise'
import { parsePhaseNoiseQuery } from '../../../utils/series-query'

export default defineEventHandler((event) => lotPhaseNoise(useDb(), decodeURIComponent(getRouterParam(event, 'code') ?? ''), parsePhaseNoiseQuery(getQuery(event))))
