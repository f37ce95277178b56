import { defaultOwner, evalPeriodMs, evaluateAlerts, stopEvaluating } from '../services/alerts/evaluate'
import { repeatEvery } from '../utils/repeating-task'

// Evaluates alert rules every TERCET_ALERT_EVAL_MS on whichever instance holds the lease in job_leases; the marks
// it works from and the clock kinds' last run live in the database, so instances may come and go.
export default defineNitroPlugin((nitro) => {
  const owner = defaultOwner()
  const period = evalPeriodMs()
  repeatEvery(nitro, period, 'evaluating alert rules', () => evaluateAlerts(useDb(), { owner, leaseMs: Math.max(30_000, 10 * period) }))
  nitro.hooks.hook('close', async () => { await stopEvaluating(useDb(), owner).catch(() => {}) })
})
