import { closeAllStreams } from '../services/analytics/floor-streams'

// Graceful shutdown waits for open connections; a wall monitor's event stream never ends by itself,
// so it is closed at the signal and the browser reconnects to the next server.
export default defineNitroPlugin(() => {
  for (const signal of ['SIGTERM', 'SIGINT'] as const) process.once(signal, () => { closeAllStreams() })
})
