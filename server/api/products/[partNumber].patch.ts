import schema from '../../../shared/schemas/product-update.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeProduct, type ProductChange } from '../../services/catalogue'

const validate = compileSchema<ProductChange>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const body = await readValidBody(event, validate)
  const product = await changeProduct(useDb(), actor.id, partNumber, body)
  if (!product) throw problem(404, `No product ${partNumber}.`)
  return { product }
})
