import { idParam } from '../../../../utils/route-params'
import { compareRevisions } from '../../../../services/spec-views'
import { underRules } from '../../../../services/rule-error'

/** What changes from revision :id to revision :other (added, removed and changed limits). */
export default defineEventHandler(async (event) => {
  const from = idParam(event, 'id', 'revision')
  const to = idParam(event, 'other', 'revision')
  return underRules(() => compareRevisions(useDb(), from, to))
})
