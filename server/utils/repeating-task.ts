import type { NitroApp } from 'nitropack'

/**
 * Runs `task` every `ms` for as long as the server runs, never two at once; a failure (the database away for a
 * while) is reported at most once a minute, as `what failed: …`.
 */
export function repeatEvery(nitro: NitroApp, ms: number, what: string, task: () => Promise<unknown>): void {
  let busy = false
  let lastError = 0
  const timer = setInterval(() => {
    if (busy) return
    busy = true
    task()
      .catch((e) => {
        if (Date.now() - lastError > 60_000) { lastError = Date.now(); console.warn(`[tercet] ${what} failed: ${e?.message ?? e}`) }
      })
      .finally(() => { busy = false })
  }, ms)
  timer.unref()
  nitro.hooks.hook('close', () => { clearInterval(timer) })
}
