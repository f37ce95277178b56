import { productRevisions } from '../../../services/spec-views'

export default defineEventHandler(async (event) => {
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  const view = await productRevisions(useDb(), partNumber)
  if (!view) throw problem(404, `No product ${partNumber}.`)
  return view
})
