import { drainRejudgeQueue } from '../services/calibration/rejudge'

const EVERY_MS = 2000

// Runs whose write met a calibration history newer than their judgement are queued by that write; any process
// judges them again. The queue is almost always empty: one indexed read every two seconds.
export default defineNitroPlugin((nitro) => {
  let busy = false
  let lastError = 0
  const timer = setInterval(() => {
    if (busy) return
    busy = true
    drainRejudgeQueue(useDb())
      .catch((e) => {
        if (Date.now() - lastError > 60_000) { lastError = Date.now(); console.warn(`[tercet] judging queued runs against calibration failed: ${e?.message ?? e}`) }
      })
      .finally(() => { busy = false })
  }, EVERY_MS)
  timer.unref()
  nitro.hooks.hook('close', () => { clearInterval(timer) })
})
