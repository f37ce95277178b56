import { stationList } from '../../services/stations'

export default defineEventHandler(async () => ({ stations: await stationList(useDb()) }))
