import { specInForce } from '../../../services/products'

export default defineEventHandler(async (event) => {
  const part = getRouterParam(event, 'partNumber') ?? ''
  const spec = await specInForce(useDb(), decodeURIComponent(part))
  if (!spec) throw problem(404, `Unknown part number ${part}.`)
  return spec
})
