import type { NitroApp } from 'nitropack'
import { databaseFaults } from './database-faults'

/**
 * Runs `task` every `ms` for as long as the server runs, never two at once. A pass stopped by the database being
 * away goes to the fault log (one line when the outage starts, one when it ends, with the passes stopped); any
 * other failure is reported at most once a minute, as `what failed: …`.
 */
export function repeatEvery(nitro: NitroApp, ms: number, what: string, task: () => Promise<unknown>): void {
  let busy = false
  let lastError = 0
  const timer = setInterval(() => {
    if (busy) return
    busy = true
    task()
      .then(() => { databaseFaults.answered() })
      .catch((e) => {
        if (databaseFaults.fault(what, e)) return
        if (Date.now() - lastError > 60_000) { lastError = Date.now(); console.warn(`[tercet] ${what} failed: ${e?.message ?? e}`) }
      })
      .finally(() => { busy = false })
  }, ms)
  timer.unref()
  nitro.hooks.hook('close', () => { clearInterval(timer) })
}
