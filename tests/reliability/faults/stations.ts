// Several simulated stations posting at a steady load while a test disturbs the server or its database, and the
// figures of what they were told against what the database holds afterwards.
import type { Knex } from 'knex'
import { simulateStation } from '../../../scripts/lib/station-sim-run'
import type { Rig } from './rig'

export type StationPlan = { station: string; part: string; batch: number }

/** The demo's four stations: two post one run at a time, two post batches. */
export const STATIONS: StationPlan[] = [
  { station: 'ATE-T3-01', part: 'VFW-T3-375', batch: 1 },
  { station: 'ATE-D2-01', part: 'VFW-D2-250', batch: 1 },
  { station: 'ATE-T3-02', part: 'VFW-T3-375', batch: 8 },
  { station: 'ATE-X8-01', part: 'VFW-X8-12G', batch: 4 },
]

// retries outlast an outage of tens of seconds; Retry-After (5 s) is honoured up to the cap
const BACKOFF = { baseMs: 250, capMs: 2000, attempts: 80 }

export type Figures = {
  runsPosted: number; stored: number; answers503: number; other5xx: number; network: number
  slowestMs: number; lost: number; duplicated: number; unacknowledged: number; partialRuns: number
}

export type Load = {
  stop: () => void
  /** resolves when every station has posted its last run */
  done: Promise<void>
  stored: () => number
  figures: (db: Knex) => Promise<Figures>
  batches: string[][]
}

export function startLoad(rig: Rig, tag: string, plans: StationPlan[] = STATIONS, pauseMs = 40): Load {
  let stopping = false
  const stored = new Map<string, number>()
  const lots: string[] = []
  const batches: string[][] = []
  const tally = { runsPosted: 0, answers503: 0, other5xx: 0, network: 0, slowestMs: 0 }
  const done = Promise.all(plans.map(async (p, i) => {
    const lot = `${tag}-${i + 1}`
    lots.push(lot)
    const r = await simulateStation(
      { url: rig.app.url, token: rig.tokens[p.station]!, part: p.part, lot, units: 10_000, drift: false, seed: 1000 + i, batch: p.batch },
      {
        backoff: BACKOFF, pauseMs, timeoutMs: 30_000, shouldStop: () => stopping,
        onBatch: (ids) => batches.push(ids),
        onStored: (id, run) => stored.set(id, run.measurements.length),
        onReply: (status, ms, kind) => {
          if (kind === 'http') {
            tally.slowestMs = Math.max(tally.slowestMs, ms)
            if (status === 'network') tally.network++
          }
          // a batch answered 200 counts its runs' answers; any other answer counts once
          if (status === 503) tally.answers503++
          else if (typeof status === 'number' && status >= 500) tally.other5xx++
        },
      },
    )
    tally.runsPosted += r.tally.posted
    const failures = [...r.tally.failures].filter(([k]) => k !== '422')
    if (failures.length) throw new Error(`station ${p.station} gave up on runs: ${JSON.stringify(failures)}`)
  })).then(() => {})
  return {
    stop: () => { stopping = true },
    done,
    stored: () => stored.size,
    batches,
    async figures(db) {
      const rows: { uuid: string; n: number }[] = await db('test_runs as r').join('lots as l', 'l.id', 'r.lot_id').whereIn('l.code', lots)
        .leftJoin('measurements as m', 'm.run_id', 'r.id').groupBy('r.id', 'r.uuid').select('r.uuid', db.raw('COUNT(m.id) AS n'))
      const inDb = new Map<string, number[]>()
      for (const r of rows) inDb.set(r.uuid, [...(inDb.get(r.uuid) ?? []), Number(r.n)])
      let lost = 0
      let partialRuns = 0
      for (const [id, n] of stored) {
        const got = inDb.get(id)
        if (!got) lost++
        // the server adds derived values (jitter, frequency error, mask margin) to what was posted, never fewer
        else if (got.some((k) => k < n)) partialRuns++
      }
      const duplicated = [...inDb.values()].reduce((s, v) => s + v.length - 1, 0)
      const unacknowledged = [...inDb.keys()].filter((id) => !stored.has(id)).length
      return { ...tally, slowestMs: Math.round(tally.slowestMs), stored: stored.size, lost, duplicated, unacknowledged, partialRuns }
    },
  }
}

/** Waits until the stations have been told `more` further runs were stored (the server takes runs again). */
export async function untilStored(load: Load, more: number, timeoutMs = 120_000): Promise<void> {
  const target = load.stored() + more
  const deadline = Date.now() + timeoutMs
  while (load.stored() < target) {
    if (Date.now() > deadline) throw new Error(`the stations were told of only ${load.stored()} stored runs, waiting for ${target}`)
    await new Promise((r) => setTimeout(r, 200))
  }
}
