import { createDraftRevision } from '../../../services/spec-revisions'

/** Opens a draft holding a copy of the limits in force; no body. */
export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const draft = await createDraftRevision(useDb(), actor.id, partNumber)
  setResponseStatus(event, 201)
  return { id: draft.id, revision: draft.revision }
})
