// Four stations post at a steady load, with retries, through HAProxy to two app instances over the three-node
// cluster. One database node is killed (SIGKILL) and later started again; one app instance is killed and started
// again. Stations see nothing worse than 503 with Retry-After, the dashboards keep answering, no run is lost or stored
// twice, the node catches up by incremental state transfer, every node ends with the same rows, and the aggregates
// both instances folded equal a recomputation from the rows.
import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startLoad, untilStored } from '../reliability/faults/stations'
import { nodeChecksums, sleep, startClusterRig, type ClusterRig } from './rig'

let rig: ClusterRig
beforeAll(async () => { rig = await startClusterRig() })
afterAll(async () => { await rig?.close() })

type Probe = { status: number | 'network'; retryAfter: string | null; path: string }

async function signIn(url: string): Promise<string> {
  const signIns = (await import('../../fixtures/demo-sign-ins.json')).default
  const r = await fetch(url + '/api/auth/login', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'engineer@tercet.test', password: signIns.password }) })
  if (r.status !== 200) throw new Error(`sign-in failed: ${r.status}`)
  return r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
}

/** An engineer's dashboards asked every half second through HAProxy: what they answered. */
function watchDashboards(url: string, cookie: string, lot: string) {
  const seen: Probe[] = []
  let on = true
  const one = async (path: string) => {
    try {
      const r = await fetch(url + path, { headers: { cookie, accept: 'application/json' }, signal: AbortSignal.timeout(30_000) })
      await r.text()
      seen.push({ status: r.status, retryAfter: r.headers.get('retry-after'), path })
    } catch {
      seen.push({ status: 'network', retryAfter: null, path })
    }
  }
  const loop = (async () => {
    while (on) { await Promise.all([one('/api/lots'), one(`/api/lots/${lot}/summary`)]); await sleep(500) }
  })()
  return { seen, stop: async () => { on = false; await loop } }
}

/** Waits until every node has applied the same last write (they replicate asynchronously after certification). */
async function nodesAgree(): Promise<void> {
  for (let t = 0; t < 120; t++) {
    const committed = [1, 2, 3].map((i) => rig.onNode(i, "SELECT VARIABLE_VALUE FROM information_schema.GLOBAL_STATUS WHERE VARIABLE_NAME = 'wsrep_last_committed'").trim())
    if (new Set(committed).size === 1) return
    await sleep(500)
  }
  throw new Error('the nodes did not reach the same position within a minute')
}

describe('a database node and an app instance die while stations post', () => {
  it('loses and doubles nothing, answers 503 with Retry-After at worst, and the node rejoins by incremental transfer', async () => {
    const cookie = await signIn(rig.url)
    const load = startLoad({ app: { url: rig.url }, tokens: rig.tokens } as any, 'CLU')
    await untilStored(load, 120)
    const watch = watchDashboards(rig.url, cookie, 'CLU-1')

    // the node HAProxy sends every connection to: the first one while it is up
    const logBefore = readFileSync(rig.cluster.node(1).errLog, 'utf8').length
    await rig.cluster.killNode(1)
    await untilStored(load, 150)
    await rig.instances[0]!.kill()
    await untilStored(load, 150)
    await rig.cluster.startNode(1)
    await rig.instances[0]!.start()
    await untilStored(load, 150)
    await watch.stop()
    load.stop()
    await load.done

    const f = await load.figures(rig.db)
    const statuses = watch.seen.reduce<Record<string, number>>((m, p) => ({ ...m, [String(p.status)]: (m[String(p.status)] ?? 0) + 1 }), {})
    process.stdout.write(`${JSON.stringify({ test: 'node and instance killed', ...f, dashboards: statuses })}\n`)
    expect(f.lost).toBe(0)
    expect(f.duplicated).toBe(0)
    expect(f.unacknowledged).toBeLessThanOrEqual(f.network)
    expect(f.partialRuns).toBe(0)
    expect(f.other5xx).toBe(0)
    // the dashboards: answered, or 503 with Retry-After, never a dropped connection or another error
    expect(watch.seen.filter((p) => p.status === 'network' || (p.status !== 200 && p.status !== 503))).toEqual([])
    expect(watch.seen.filter((p) => p.status === 503 && !p.retryAfter)).toEqual([])
    expect(statuses['200'] ?? 0).toBeGreaterThan(watch.seen.length / 2)

    // node 1 caught up from a peer's write-set cache, without a copy of the whole data folder
    const rejoin = readFileSync(rig.cluster.node(1).errLog, 'utf8').slice(logBefore)
    expect(rejoin).toMatch(/IST received/)
    expect(rejoin).toMatch(/IST completed on joiner/)
    expect(rejoin).not.toMatch(/Proceeding with SST/)

    await nodesAgree()
    const sums = nodeChecksums(rig, ['test_runs', 'measurements'])
    expect(new Set(sums).size, sums.join('\n')).toBe(1)
  })

  it('keeps aggregates equal to a recomputation after both instances folded side by side', async () => {
    const cookie = await signIn(rig.url)
    for (const lot of ['CLU-1', 'CLU-2', 'CLU-3', 'CLU-4']) {
      // ask each instance in turn, so that both fold the lot
      let summary: any
      for (let tries = 0; tries < 60; tries++) {
        const via = rig.instances[tries % 2]!.url
        summary = (await (await fetch(`${via}/api/lots/${lot}/summary`, { headers: { cookie, accept: 'application/json' } })).json())
        if (!summary.backlog) break
        await sleep(500)
      }
      expect(summary.backlog).toBeNull()
      const [rows] = await rig.db.raw(`SELECT m.step, m.name, m.qualifier, m.revision_id, COUNT(*) AS n, AVG(m.value) AS mean, MIN(m.value) AS lo, MAX(m.value) AS hi
        FROM measurements m JOIN lots l ON l.id = m.lot_id WHERE l.code = ? AND m.first_attempt AND NOT m.implausible
        GROUP BY m.step, m.name, m.qualifier, m.revision_id`, [lot])
      const want = new Map((rows as any[]).map((r) => [`${r.step}|${r.name}|${Number(r.qualifier)}|${r.revision_id}`, r]))
      expect(summary.capability.length).toBe(want.size)
      for (const c of summary.capability) {
        const w = want.get(`${c.step}|${c.name}|${c.qualifier}|${c.revisionId}`)
        expect(w, `${lot} ${c.step} ${c.name}`).toBeDefined()
        expect(c.n).toBe(Number(w.n))
        // relative to the size of the values (output frequencies are some 10^10 Hz): sums taken in another order
        // and the text protocol prints doubles to 15 digits
        const near = (got: number, want: unknown) => expect(Math.abs(got - Number(want)), `${lot} ${c.step} ${c.name}: ${got} against ${want}`)
          .toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(Number(want))))
        near(c.mean, w.mean)
        near(c.min, w.lo)
        near(c.max, w.hi)
      }
      const [runs] = await rig.db.raw('SELECT r.step, COUNT(*) AS n FROM test_runs r JOIN lots l ON l.id = r.lot_id WHERE l.code = ? GROUP BY r.step', [lot])
      for (const r of runs as any[]) expect(summary.steps.find((s: any) => s.step === r.step)?.runs).toBe(Number(r.n))
    }
  })
})
