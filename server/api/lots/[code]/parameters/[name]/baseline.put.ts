import schema from '../../../../../../shared/schemas/control-baseline.schema.json'
import { compileSchema } from '../../../../../utils/run-validator'
import { freezeBaseline, BASELINE_DEFAULT } from '../../../../../services/analytics/baseline'

const validate = compileSchema<{ step?: string; qualifier?: number; points?: number }>(schema)

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const body = await readValidBody(event, validate)
  const code = decodeURIComponent(getRouterParam(event, 'code') ?? '')
  const name = decodeURIComponent(getRouterParam(event, 'name') ?? '')
  return freezeBaseline(useDb(), { code, name, step: body.step ?? 'final', qualifier: body.qualifier ?? 0, points: body.points ?? BASELINE_DEFAULT, userId: user.id })
})
