import { lotPhaseNoise } from '../../../services/analytics/phase-noise'

export default defineEventHandler((event) => lotPhaseNoise(useDb(), decodeURIComponent(getRouterParam(event, 'code') ?? ''), getQuery(event)))
