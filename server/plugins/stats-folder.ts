import { foldPendingStats } from '../services/ingest/fold-param-stats'
import { repeatEvery } from '../utils/repeating-task'

// Keeps the parameter statistics within a fraction of a second of the stored runs while stations post; readers fold
// their own lot before reading in any case.
export default defineNitroPlugin((nitro) => {
  repeatEvery(nitro, 250, 'folding parameter statistics', () => foldPendingStats(useDb(), { background: true }))
})
