import { idParam } from '../../utils/route-params'
import { revisionDetail } from '../../services/spec-views'

export default defineEventHandler(async (event) => {
  const id = idParam(event, 'id', 'revision')
  const view = await revisionDetail(useDb(), id)
  if (!view) throw problem(404, 'No such revision.')
  return view
})
