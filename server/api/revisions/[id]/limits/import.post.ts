import { idParam } from '../../../../utils/route-params'
import { readCsvBody } from '../../../../utils/csv-body'
import { importDraftLimits } from '../../../../services/spec-revisions'

/** Replaces a draft's limits from CSV; with ?preview=1 only reports what would be read. Nothing is applied while any row is wrong. */
export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'revision')
  const preview = ['1', 'true', 'yes'].includes(String(getQuery(event).preview ?? ''))
  const text = await readCsvBody(event, 1_000_000)
  return importDraftLimits(useDb(), actor.id, id, text, preview)
})
