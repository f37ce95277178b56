import schema from '../../../../shared/schemas/revision-approve.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { idParam } from '../../../utils/route-params'
import { approveRevision } from '../../../services/spec-revisions'

const validate = compileSchema<{ effectiveAt?: string; note?: string; password?: string }>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'revision')
  const body = await readValidBody(event, validate)
  const signed = await requireSignature(event, actor, body.password)
  const effectiveAt = body.effectiveAt ? new Date(body.effectiveAt) : undefined
  const approved = await approveRevision(useDb(), actor, id, { effectiveAt, note: body.note, signed })
  return { id, revision: approved.revision, status: 'approved', effectiveAt: approved.effectiveAt, superseded: approved.superseded }
})
