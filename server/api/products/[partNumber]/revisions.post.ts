import { createDraftRevision } from '../../../services/spec-revisions'
import { underRules } from '../../../services/rule-error'

/** Opens a draft holding a copy of the limits in force; no body. */
export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const draft = await underRules(() => createDraftRevision(useDb(), actor.id, partNumber))
  setResponseStatus(event, 201)
  return { id: draft.id, revision: draft.revision }
})
