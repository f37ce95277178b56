// What the floor view shows: stations' last activity, arriving runs and open lots' first-pass counts.
import type { Knex } from 'knex'

export type FloorStation = {
  id: number; name: string; location: string | null; lastSeenAt: Date | null; runsToday: number
  lastRun: { id: number; verdict: 'pass' | 'fail'; finishedAt: Date; serial: string; lot: string; step: string } | null
}

/** Every station with its run count since `todayFrom` (the plant day's start) and its latest run (both from the (station, finished_at) index). */
export async function floorStations(db: Knex, todayFrom: Date): Promise<FloorStation[]> {
  const stations = await db('stations as s').orderBy('s.name').select('s.id', 's.name', 's.location', 's.last_seen_at',
    db('test_runs as r').count('*').whereRaw('r.station_id = s.id').where('r.finished_at', '>=', todayFrom).as('runs_today'),
    db('test_runs as r').select('r.id').whereRaw('r.station_id = s.id').orderBy('r.finished_at', 'desc').orderBy('r.id', 'desc').limit(1).as('last_run_id'))
  const lastIds = stations.map((s: any) => s.last_run_id).filter((id: unknown) => id != null)
  const last = lastIds.length
    ? await db('test_runs as r').join('units as u', 'u.id', 'r.unit_id').join('lots as l', 'l.id', 'r.lot_id').whereIn('r.id', lastIds)
      .select('r.id', 'r.server_verdict', 'r.finished_at', 'r.step', 'u.serial', 'l.code')
    : []
  const byId = new Map(last.map((r: any) => [Number(r.id), r]))
  return stations.map((s: any) => {
    const r = s.last_run_id != null ? byId.get(Number(s.last_run_id)) : undefined
    return {
      id: s.id, name: s.name, location: s.location ?? null, lastSeenAt: s.last_seen_at ? new Date(s.last_seen_at) : null,
      runsToday: Number(s.runs_today ?? 0),
      lastRun: r ? { id: Number(r.id), verdict: r.server_verdict, finishedAt: new Date(r.finished_at), serial: r.serial, lot: r.code, step: r.step } : null,
    }
  })
}

export type FloorLotRow = {
  id: number; code: string; partNumber: string; productName: string; status: string; plannedQty: number | null; steps: string[]
  stepStats: { step: string; units: number; firstPass: number; runs: number }[]
}

/** Which lots the floor shows: production lots still in production (open or on hold; engineering lots left out). The one place that decides it. */
export function onTheFloor(q: Knex.QueryBuilder): Knex.QueryBuilder {
  return q.whereIn('l.status', ['open', 'on_hold']).where('l.engineering', false)
}

/** Lots on the floor with their per-step first-pass counts summed over stations; open ones before those on hold, newest first. */
export async function floorLots(db: Knex): Promise<FloorLotRow[]> {
  const lots = await onTheFloor(db('lots as l').join('products as p', 'p.id', 'l.product_id'))
    .orderByRaw("l.status = 'open' DESC").orderBy('l.created_at', 'desc').orderBy('l.code')
    .select('l.id', 'l.code', 'l.status', 'l.planned_qty', 'p.part_number', 'p.name as product_name', 'p.steps')
  if (!lots.length) return []
  const stats = await db('lot_step_stats').whereIn('lot_id', lots.map((l: any) => l.id)).groupBy('lot_id', 'step')
    .select('lot_id', 'step').sum({ units: 'units', first_pass: 'first_pass', runs: 'runs' })
  return lots.map((l: any) => ({
    id: l.id, code: l.code, partNumber: l.part_number, productName: l.product_name, status: l.status, plannedQty: l.planned_qty ?? null,
    steps: Array.isArray(l.steps) ? l.steps : JSON.parse(String(l.steps)),
    stepStats: stats.filter((s: any) => s.lot_id === l.id).map((s: any) => ({ step: s.step, units: Number(s.units), firstPass: Number(s.first_pass), runs: Number(s.runs) })),
  }))
}

export type FloorRunRow = {
  id: number; serial: string; part: string; lot: string; station: string; step: string; attempt: number
  verdict: 'pass' | 'fail'; startedAt: Date; finishedAt: Date; receivedAt: Date; failed: number; engineering: boolean
}

function runsQuery(db: Knex) {
  return db('test_runs as r').join('units as u', 'u.id', 'r.unit_id').join('lots as l', 'l.id', 'r.lot_id')
    .join('products as p', 'p.id', 'l.product_id').join('stations as s', 's.id', 'r.station_id')
    .select('r.id', 'u.serial', 'p.part_number', 'l.code', 's.name as station_name', 'r.step', 'r.attempt', 'r.server_verdict', 'r.started_at', 'r.finished_at', 'r.received_at', 'l.engineering',
      db('measurements as m').count('*').whereRaw('m.run_id = r.id').where('m.verdict', 'fail').as('failed'))
}

function toRun(r: any): FloorRunRow {
  return {
    id: Number(r.id), serial: r.serial, part: r.part_number, lot: r.code, station: r.station_name, step: r.step, attempt: r.attempt,
    verdict: r.server_verdict, startedAt: new Date(r.started_at), finishedAt: new Date(r.finished_at), receivedAt: new Date(r.received_at),
    failed: Number(r.failed ?? 0), engineering: Boolean(r.engineering),
  }
}

/** Runs after the key (received at, then id) in that order: a range of the received_at index. */
export async function runsAfterKey(db: Knex, at: Date, id: number, limit: number): Promise<FloorRunRow[]> {
  const q = runsQuery(db).where((w) => { w.where('r.received_at', '>', at).orWhere((x) => x.where('r.received_at', at).where('r.id', '>', id)) })
  return (await q.orderBy('r.received_at').orderBy('r.id').limit(limit)).map(toRun)
}

/** Ids and times of the runs received in [from, to], newest first (index only: the received_at index holds the id). */
export async function runKeysReceivedBetween(db: Knex, from: Date, to: Date, limit: number): Promise<{ id: number; at: number }[]> {
  const rows = await db('test_runs').where('received_at', '>=', from).where('received_at', '<=', to)
    .orderBy('received_at', 'desc').orderBy('id', 'desc').limit(limit).select('id', 'received_at')
  return rows.map((r: any) => ({ id: Number(r.id), at: new Date(r.received_at).getTime() }))
}

export async function runsByIds(db: Knex, ids: number[]): Promise<FloorRunRow[]> {
  if (!ids.length) return []
  return (await runsQuery(db).whereIn('r.id', ids)).map(toRun)
}

/** The latest runs by arrival (received at, then id), newest first. */
export async function latestRuns(db: Knex, limit: number): Promise<FloorRunRow[]> {
  return (await runsQuery(db).orderBy('r.received_at', 'desc').orderBy('r.id', 'desc').limit(limit)).map(toRun)
}

export async function maxRunId(db: Knex): Promise<number> {
  const r = await db('test_runs').max({ id: 'id' }).first()
  return Number(r?.id ?? 0)
}
