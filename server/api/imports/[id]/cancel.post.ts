import { cancelImport } from '../../../services/imports'
import { importJobId } from '../../../utils/import-params'

/** Asks a running import to stop; the runs stored before it stops stay stored. */
export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = importJobId(event)
  return cancelImport(useDb(), actor.id, id)
})
