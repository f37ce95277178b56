import { instrumentRegistry } from '../../services/calibration/views'

export default defineEventHandler(async () => ({ instruments: await instrumentRegistry(useDb()) }))
