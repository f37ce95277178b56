import type { PlantTimeDto } from '../../shared/types/settings'
import { plantTimeZone } from '../services/settings'

export default defineEventHandler(async (): Promise<PlantTimeDto> => ({ zone: await plantTimeZone(useDb()) }))
