import { unitHistory } from '../../services/unit-history'

const SERIAL = /^[A-Za-z0-9._-]{1,64}$/

export default defineEventHandler(async (event) => {
  const serial = getRouterParam(event, 'serial') ?? ''
  if (!SERIAL.test(serial)) throw problem(404, `No unit with serial ${JSON.stringify(serial)}.`)
  const q = getQuery(event).part
  if (q !== undefined && (typeof q !== 'string' || !q.length)) {
    throw problem(400, 'part must be given once, as a part number.', { errors: [{ pointer: '/part', message: 'must be a single part number' }] })
  }
  const r = await unitHistory(useDb(), serial, q)
  if (r.kind === 'ambiguous') {
    throw problem(409, `Serial ${serial} is recorded under ${r.parts.length} part numbers (${r.parts.join(', ')}); choose one with ?part=.`, { parts: r.parts })
  }
  if (r.kind === 'missing') {
    throw problem(404, r.parts.length ? `Serial ${serial} is not recorded under part ${q}; it is under ${r.parts.join(', ')}.` : `No unit with serial ${serial}.`, { parts: r.parts })
  }
  return { unit: r.unit, runs: r.runs }
})
