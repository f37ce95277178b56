import { ALERT_KINDS, type AlertKind } from '../../shared/utils/alert-kinds'
import type { AlertState } from '../../shared/types/alert'
import { problem } from './problem'

const one = (v: unknown): string | undefined => (Array.isArray(v) ? v[0] : typeof v === 'string' && v !== '' ? v : undefined)

/** An optional alert kind from the query string; an unknown one is a 400 naming the parameter. */
export function kindParam(q: Record<string, unknown>): AlertKind | undefined {
  const k = one(q.kind)
  if (k === undefined) return undefined
  if (!(ALERT_KINDS as readonly string[]).includes(k)) throw problem(400, `Unknown alert kind ${k}.`, { errors: [{ pointer: '/kind', message: `must be one of ${ALERT_KINDS.join(', ')}` }] })
  return k as AlertKind
}

/** The list's filters: state (open by default), mine, kind, product, station, cursor and page size. */
export function alertListParams(q: Record<string, unknown>) {
  const state = (one(q.state) ?? 'open') as AlertState
  if (!['open', 'acknowledged', 'all'].includes(state)) throw problem(400, 'state must be open, acknowledged or all.', { errors: [{ pointer: '/state', message: 'must be open, acknowledged or all' }] })
  const station = one(q.station)
  if (station !== undefined && !/^\d{1,10}$/.test(station)) throw problem(400, 'station must be a station id.', { errors: [{ pointer: '/station', message: 'must be a whole number' }] })
  const limitText = one(q.limit) ?? '50'
  const limit = Number(limitText)
  if (!/^\d{1,3}$/.test(limitText) || limit < 1 || limit > 200) throw problem(400, 'limit must be from 1 to 200.', { errors: [{ pointer: '/limit', message: 'must be from 1 to 200' }] })
  const mine = one(q.mine)
  return {
    state, mine: mine === '1' || mine === 'true', kind: kindParam(q), partNumber: one(q.product),
    stationId: station === undefined ? undefined : Number(station), cursor: one(q.cursor), limit,
  }
}
