import type { H3Event } from 'h3'
import { CUSTOM_NAME_PATTERN } from '../../shared/utils/measurement-names'
import { problem } from './problem'

/** Route and query parameters naming one parameter of one lot: /api/lots/:code/parameters/:name?step=&qualifier=&attempts=&revision= */
export function parseParameterQuery(event: H3Event) {
  const code = decodeURIComponent(getRouterParam(event, 'code') ?? '')
  const name = decodeURIComponent(getRouterParam(event, 'name') ?? '')
  const query = getQuery(event)
  const errors: { pointer: string; message: string }[] = []
  if (!CUSTOM_NAME_PATTERN.test(name)) errors.push({ pointer: '/name', message: 'not a measurement name' })
  const step = typeof query.step === 'string' && query.step ? query.step : 'final'
  if (!/^[a-z][a-z0-9-]{0,23}$/.test(step)) errors.push({ pointer: '/step', message: 'not a step name' })
  const qualifier = query.qualifier === undefined || query.qualifier === '' ? 0 : Number(query.qualifier)
  if (!Number.isFinite(qualifier) || qualifier < 0) errors.push({ pointer: '/qualifier', message: 'must be a number ≥ 0' })
  const attempts = query.attempts ?? 'first'
  if (attempts !== 'first' && attempts !== 'all') errors.push({ pointer: '/attempts', message: 'must be first or all' })
  const revision = query.revision === undefined || query.revision === '' ? null : Number(query.revision)
  if (revision !== null && !(Number.isInteger(revision) && revision >= 1)) errors.push({ pointer: '/revision', message: 'must be a revision number (1, 2, …)' })
  if (errors.length) throw problem(400, 'The parameter query is not valid.', { errors })
  return { code, name, step, qualifier, attempts: attempts as 'first' | 'all', revision }
}
