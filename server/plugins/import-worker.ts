import { resumeImports } from '../services/import-resume'
import { repeatEvery } from '../utils/repeating-task'

// Carries on, every second, imports left behind by an instance that stopped (their lease ran out), and removes
// uploads that never arrived whole.
export default defineNitroPlugin((nitro) => {
  if (process.env.TERCET_IMPORT_WORKER === '0') return
  repeatEvery(nitro, 1000, 'resuming imports', () => resumeImports(useDb()))
})
