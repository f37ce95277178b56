// Rules evaluated on a clock rather than on new results: instruments falling due and stations gone silent.
import type { Knex } from 'knex'
import { checkCalibrationDue, checkStationSilent, type HeldInstrument, type StationActivity } from '../../../shared/utils/alert-checks'
import { latestRunOfStation, openLotsTestedSince, stationNames, type RuleRow } from '../../database/repositories/alert-reads'
import { currentInstrumentsOfStations } from '../calibration/views'
import type { Outcome } from './outcome'

const DAY_MS = 86_400_000

export async function evaluateClockRule(db: Knex, r: RuleRow, now: Date, dueSoonDays: number): Promise<Outcome[]> {
  const stations = await stationNames(db, r.stationId)
  const nameOf = new Map(stations.map((s) => [s.id, s.name]))
  if (r.kind === 'calibration_due') {
    const held = await currentInstrumentsOfStations(db, stations.map((s) => s.id), now)
    const list: HeldInstrument[] = [...held].flatMap(([stationId, instruments]) => instruments.map((i) => ({
      instrumentId: i.id, assetNumber: i.assetNumber, stationId, station: nameOf.get(stationId) ?? String(stationId), dueAt: i.calibrationDue ? new Date(i.calibrationDue) : null,
    })))
    return checkCalibrationDue(list, now, dueSoonDays).map((s) => {
      const i = list.find((x) => s.key.startsWith(`instrument:${x.instrumentId}/`))!
      const dueOn = i.dueAt ? i.dueAt.toISOString().slice(0, 10) : null
      return {
        subject: s.key, subjectLabel: s.label, summary: s.summary, figures: s.figures, link: `/stations/${i.stationId}`,
        productId: null, lotId: null, stationId: i.stationId, instrumentId: i.instrumentId, once: true,
        instrument: { assetNumber: i.assetNumber, station: i.station, dueOn, daysLeft: i.dueAt ? Math.floor((i.dueAt.getTime() - now.getTime()) / DAY_MS) : null },
      }
    })
  }
  if (r.kind === 'station_silent') {
    const activity: StationActivity[] = []
    for (const s of stations) {
      const last = await latestRunOfStation(db, s.id)
      if (!last) continue
      // a silence is raised only when the station was testing an open lot recently
      const lots = now.getTime() - last.receivedAt.getTime() > (r.silentMinutes ?? 0) * 60_000 ? await openLotsTestedSince(db, s.id, new Date(now.getTime() - DAY_MS)) : []
      activity.push({ stationId: s.id, station: s.name, lastRunId: last.id, lastRunAt: new Date(last.receivedAt), openLotsRecently: lots })
    }
    return checkStationSilent(activity, now, r.silentMinutes ?? 0).map((s) => {
      const stationId = Number(/^station:(\d+)/.exec(s.key)![1])
      return { subject: s.key, subjectLabel: s.label, summary: s.summary, figures: s.figures, link: `/stations/${stationId}`, productId: null, lotId: null, stationId, instrumentId: null, once: true }
    })
  }
  return []
}
