import { foldPendingStats } from '../services/ingest/fold-param-stats'

const EVERY_MS = 250

// Keeps the parameter statistics within a fraction of a second of the stored runs while stations post; readers fold
// their own lot before reading in any case.
export default defineNitroPlugin((nitro) => {
  let busy = false
  let lastError = 0
  const timer = setInterval(() => {
    if (busy) return
    busy = true
    foldPendingStats(useDb(), { background: true })
      .catch((e) => {
        // the database may be away for a while; say so at most once a minute
        if (Date.now() - lastError > 60_000) { lastError = Date.now(); console.warn(`[tercet] folding parameter statistics failed: ${e?.message ?? e}`) }
      })
      .finally(() => { busy = false })
  }, EVERY_MS)
  timer.unref()
  nitro.hooks.hook('close', () => { clearInterval(timer) })
})
