import schema from '../../../shared/schemas/product-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { createProduct, type NewProduct } from '../../services/catalogue'

const validate = compileSchema<NewProduct>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const product = await createProduct(useDb(), actor.id, body)
  setResponseStatus(event, 201)
  return { product }
})
