import { resumeImport } from '../../../services/import-resume'
import { importJobId } from '../../../utils/import-params'

/** Carries on a stuck import from its last recorded line, from the file kept in the database. */
export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = importJobId(event)
  return resumeImport(useDb(), actor.id, id)
})
