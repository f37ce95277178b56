import type { Knex } from 'knex'
import type { StationRecentRun } from '../../../shared/types/station-runs'

/** A station's latest runs by finish time, newest first: one range of the (station_id, finished_at) index. */
export async function recentStationRuns(db: Knex, stationId: number, limit: number): Promise<StationRecentRun[]> {
  const rows = await db('test_runs as r')
    .join('units as u', 'u.id', 'r.unit_id')
    .join('products as p', 'p.id', 'u.product_id')
    .join('lots as l', 'l.id', 'r.lot_id')
    .where('r.station_id', stationId)
    .orderBy('r.finished_at', 'desc').orderBy('r.id', 'desc')
    .limit(limit)
    .select('r.uuid', 'u.serial', 'p.part_number', 'l.code as lot', 'r.step', 'r.attempt', 'r.server_verdict', 'r.started_at', 'r.finished_at')
  return rows.map((r: any) => ({
    id: r.uuid, serial: r.serial, partNumber: r.part_number, lot: r.lot, step: r.step, attempt: Number(r.attempt),
    verdict: r.server_verdict, startedAt: new Date(r.started_at).toISOString(), finishedAt: new Date(r.finished_at).toISOString(),
  }))
}

export async function stationExists(db: Knex, id: number): Promise<boolean> {
  return !!(await db('stations').where({ id }).first('id'))
}
