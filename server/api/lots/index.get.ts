import { listLots } from '../../database/repositories/lots'

export default defineEventHandler(async () => ({ lots: await listLots(useDb()) }))
