import { databaseFaults } from '../utils/database-faults'

// The database pool closes with the server; while an outage is logged, a probe tells the fault log when the
// database answers again.
export default defineNitroPlugin((nitro) => {
  databaseFaults.setProbe(() => useDb().raw('SELECT 1'))
  nitro.hooks.hook('close', async () => {
    databaseFaults.stop()
    await closeDb()
  })
})
