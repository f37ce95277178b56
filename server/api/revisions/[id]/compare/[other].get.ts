import { idParam } from '../../../../utils/route-params'
import { compareRevisions } from '../../../../services/spec-views'

/** What changes from revision :id to revision :other (added, removed and changed limits). */
export default defineEventHandler(async (event) => {
  const from = idParam(event, 'id', 'revision')
  const to = idParam(event, 'other', 'revision')
  return compareRevisions(useDb(), from, to)
})
