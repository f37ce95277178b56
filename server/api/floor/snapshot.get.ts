import { floorSnapshot } from '../../services/analytics/floor'

export default defineEventHandler(async () => (await floorSnapshot(useDb())).snapshot)
