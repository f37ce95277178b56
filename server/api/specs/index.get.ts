import { specOverview } from '../../services/spec-views'

export default defineEventHandler(async () => ({ products: await specOverview(useDb()) }))
