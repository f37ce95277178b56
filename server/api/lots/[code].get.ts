import { lotDetail } from '../../services/lot-views'

export default defineEventHandler(async (event) => {
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const lot = await lotDetail(useDb(), code)
  if (!lot) throw problem(404, `No lot ${code}.`)
  return { lot }
})
