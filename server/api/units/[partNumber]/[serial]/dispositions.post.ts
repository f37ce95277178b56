import schema from '../../../../../shared/schemas/unit-disposition.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { addDisposition, type DispositionInput } from '../../../../services/retest'

const validate = compileSchema<DispositionInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const serial = getRouterParam(event, 'serial', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  const r = await addDisposition(useDb(), actor.id, partNumber, serial, body)
  setResponseStatus(event, 201)
  return { disposition: r }
})
