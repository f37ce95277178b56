import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { sleep, startRig, type Rig } from './rig'
import { startLoad, untilStored } from './stations'

// The server killed outright (SIGKILL) while stations post batches, twice, and started again: no run is stored in
// part, every batch is stored whole or not at all, and the stations' retries complete the set with none lost or
// stored twice.
let rig: Rig
beforeAll(async () => { rig = await startRig() })
afterAll(async () => { await rig?.close() })

const BATCHING = [
  { station: 'ATE-T3-01', part: 'VFW-T3-375', batch: 12 },
  { station: 'ATE-T3-02', part: 'VFW-T3-375', batch: 8 },
  { station: 'ATE-D2-01', part: 'VFW-D2-250', batch: 10 },
  { station: 'ATE-X8-01', part: 'VFW-X8-12G', batch: 6 },
]

describe('the server killed in the middle of batch posts', () => {
  it('leaves no partial run or batch, and the stations\' retries complete the set', async () => {
    const load = startLoad(rig, 'FLT-APP', BATCHING, 10)
    const splitBatches: string[] = []
    let downS = 0
    for (let kill = 0; kill < 2; kill++) {
      await untilStored(load, 150)
      const t0 = Date.now()
      await rig.app.kill()
      // with the server gone, what the database holds is final for the batches sent so far
      const present = new Set((await rig.db('test_runs').whereIn('uuid', load.batches.flat()).select('uuid')).map((r: { uuid: string }) => r.uuid))
      for (const b of load.batches) {
        const n = b.filter((id) => present.has(id)).length
        if (n !== 0 && n !== b.length) splitBatches.push(`${n} of ${b.length}`)
      }
      await sleep(1500)
      await rig.app.start()
      downS += (Date.now() - t0) / 1000
    }
    await untilStored(load, 150)
    load.stop()
    await load.done
    const f = await load.figures(rig.db)
    process.stdout.write(JSON.stringify({ test: 'server killed during batch posts', outageS: downS, kills: 2, batches: load.batches.length, splitBatches: splitBatches.length, ...f }) + '\n')
    expect(splitBatches).toEqual([])
    expect(f.other5xx).toBe(0)
    expect(f.network).toBeGreaterThan(0)
    expect({ lost: f.lost, duplicated: f.duplicated, unacknowledged: f.unacknowledged, partialRuns: f.partialRuns }).toEqual({ lost: 0, duplicated: 0, unacknowledged: 0, partialRuns: 0 })
  })
})
