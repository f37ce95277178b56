// A backup taken while stations post is a consistent snapshot: restored into a fresh database, its aggregates equal a
// recomputation from its rows, every foreign key resolves, and it holds exactly the runs stations had been told were
// stored (all those acknowledged before the dump began, none that had not been acknowledged when it ended).
import { randomBytes } from 'node:crypto'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { Knex } from 'knex'
import { afterAll, describe, expect, inject, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { freshenLotStats } from '../../server/services/ingest/fold-param-stats'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../../fixtures/run-generator'
// @ts-expect-error plain ES module without types
import { backupDatabase, restoreDatabase } from '../../scripts/lib/backup.mjs'
import { stationTokens } from '../support/stations'

const baseUrl = inject('baseUrl')
const conn = connectionFromEnv()
const restoredName = `${conn.database}_restore_${randomBytes(3).toString('hex')}`
const dir = mkdtempSync(join(tmpdir(), 'tercet-backup-test-'))
let restored: Knex | undefined

afterAll(async () => {
  await restored?.raw(`DROP DATABASE IF EXISTS \`${restoredName}\``).catch(() => {})
  await restored?.destroy()
  rmSync(dir, { recursive: true, force: true })
})

type Ack = { at: number; run: GeneratedRun }

/** Posts runs of new units, each step in turn, until told to stop; records when each run was acknowledged. */
async function station(token: string, lot: string, seed: number, acks: Map<string, Ack>, stop: () => boolean) {
  const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
  const rand = mulberry32(seed)
  for (let u = 0; !stop(); u++) {
    const serial = `${lot}-${seed}-${u}`
    for (const [k, step] of ['tune', 'burn-in', 'final'].entries()) {
      const run = generateRun({ product: tripler, lot, serial, step, startedAt: new Date(Date.now() - 600_000 + k * 60_000), rand, failRate: 0.1 })
      for (;;) {
        const r = await fetch(`${baseUrl}/api/v1/runs`, {
          method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' }, body: JSON.stringify(run),
        })
        await r.arrayBuffer()
        if (r.status === 201 || r.status === 200) { acks.set(run.id, { at: Date.now(), run }); break }
        if (r.status !== 503) throw new Error(`the station's post answered ${r.status}`)
        await new Promise((d) => setTimeout(d, 200))
      }
    }
  }
}

describe('npm run db:backup under ingest load, restored with npm run db:restore', () => {
  it('restores a consistent database holding exactly the runs acknowledged to stations', async () => {
    const tokens = stationTokens()
    const lot = `BK-${Date.now().toString(36).toUpperCase()}`
    const acks = new Map<string, Ack>()
    let stopping = false
    const load = ['ATE-T3-01', 'ATE-T3-02', 'ATE-T3-01', 'ATE-T3-02'].map((s, i) => station(tokens[s]!, lot, 100 + i, acks, () => stopping))

    await new Promise((d) => setTimeout(d, 3000))
    const ackedBeforeStart = [...acks.keys()]
    const backup = await backupDatabase(conn.database, { dir })
    // stations keep posting while the dump is written and a while after, so late runs exist that the backup must not hold
    await new Promise((d) => setTimeout(d, 1000))
    stopping = true
    await Promise.all(load)
    expect(ackedBeforeStart.length).toBeGreaterThan(10)
    expect(acks.size).toBeGreaterThan(ackedBeforeStart.length)

    const r = await restoreDatabase(backup.file, restoredName, { appUser: conn.user })
    expect(r.tables).toBeGreaterThan(20)
    restored = createKnex({ ...conn, database: restoredName })

    // exactly the acknowledged runs: all acknowledged before the dump began, none not yet acknowledged when it ended
    const held = await restored('test_runs as r').join('lots as l', 'l.id', 'r.lot_id').where('l.code', lot).select('r.uuid', 'r.id')
    const heldIds = new Set(held.map((h) => h.uuid as string))
    expect(ackedBeforeStart.filter((id) => !heldIds.has(id))).toEqual([])
    const finished = backup.finishedAt.getTime()
    expect(held.filter((h) => (acks.get(h.uuid)?.at ?? Infinity) > finished).map((h) => h.uuid)).toEqual([])
    expect(held.length).toBeLessThan(acks.size)

    // no partial run: each held run has as many measurement rows (posted and derived) as the live database holds for it
    const perRun = async (db: Knex) => new Map((await db('measurements').whereIn('run_id', held.map((h) => h.id)).groupBy('run_id')
      .select('run_id', db.raw('COUNT(*) AS n'))).map((c: any) => [Number(c.run_id), Number(c.n)]))
    const live = createKnex(conn, { min: 0, max: 2 })
    const [inBackup, inLive] = await Promise.all([perRun(restored), perRun(live)]).finally(() => live.destroy())
    for (const h of held) {
      expect(inBackup.get(Number(h.id))).toBe(inLive.get(Number(h.id)))
      expect(inBackup.get(Number(h.id))).toBeGreaterThanOrEqual(acks.get(h.uuid)!.run.measurements.length)
    }

    // every foreign key of every table resolves
    const fks = await restored.raw(`SELECT CONSTRAINT_NAME AS name, TABLE_NAME AS child, REFERENCED_TABLE_NAME AS parent,
        GROUP_CONCAT(COLUMN_NAME ORDER BY ORDINAL_POSITION) AS cols, GROUP_CONCAT(REFERENCED_COLUMN_NAME ORDER BY ORDINAL_POSITION) AS refs
      FROM information_schema.KEY_COLUMN_USAGE WHERE TABLE_SCHEMA = ? AND REFERENCED_TABLE_NAME IS NOT NULL
      GROUP BY CONSTRAINT_NAME, TABLE_NAME, REFERENCED_TABLE_NAME`, [restoredName])
    expect(fks[0].length).toBeGreaterThan(20)
    const orphans: string[] = []
    for (const fk of fks[0]) {
      const cols = String(fk.cols).split(','); const refs = String(fk.refs).split(',')
      const on = cols.map((c, i) => `p.\`${refs[i]}\` = c.\`${c}\``).join(' AND ')
      const [[row]] = await restored.raw(`SELECT COUNT(*) AS n FROM \`${fk.child}\` c LEFT JOIN \`${fk.parent}\` p ON ${on}
        WHERE ${cols.map((c) => `c.\`${c}\` IS NOT NULL`).join(' AND ')} AND p.\`${refs[0]}\` IS NULL`)
      if (Number(row.n) > 0) orphans.push(`${fk.child}.${fk.cols} → ${fk.parent}: ${row.n}`)
    }
    expect(orphans).toEqual([])

    // aggregates equal a recomputation from the restored rows, once the runs still queued for the fold are folded in
    // (the app folds them the same way after a restore)
    const lotIds = (await restored('lots').select('id')).map((l) => Number(l.id))
    await freshenLotStats(restored, lotIds)
    const [agg] = await restored.raw(`SELECT lot_id, step, name, qualifier, revision_id, SUM(n) AS n,
        SUM(shift * n + sum_d) / SUM(n) AS mean, MIN(min_value) AS min, MAX(max_value) AS max
      FROM lot_param_stats WHERE n > 0 GROUP BY lot_id, step, name, qualifier, revision_id`)
    const [raw] = await restored.raw(`SELECT lot_id, step, name, qualifier, revision_id, COUNT(*) AS n, AVG(value) AS mean,
        MIN(value) AS min, MAX(value) AS max
      FROM measurements WHERE first_attempt = 1 AND implausible = 0 GROUP BY lot_id, step, name, qualifier, revision_id`)
    const key = (x: any) => `${x.lot_id}|${x.step}|${x.name}|${Number(x.qualifier)}|${x.revision_id}`
    const rawByKey = new Map(raw.map((x: any) => [key(x), x]))
    expect(agg.length).toBe(raw.length)
    for (const a of agg) {
      const b = rawByKey.get(key(a)) as any
      expect(b, key(a)).toBeDefined()
      expect(Number(a.n)).toBe(Number(b.n))
      expect(Number(a.min)).toBe(Number(b.min))
      expect(Number(a.max)).toBe(Number(b.max))
      const scale = Math.max(1, Math.abs(Number(b.mean)))
      expect(Math.abs(Number(a.mean) - Number(b.mean)) / scale).toBeLessThan(1e-9)
    }
    const [steps] = await restored.raw(`SELECT s.lot_id, s.step, SUM(s.runs) AS runs, SUM(s.units) AS units FROM lot_step_stats s GROUP BY s.lot_id, s.step`)
    const [runCounts] = await restored.raw(`SELECT lot_id, step, COUNT(*) AS runs, SUM(attempt = 1) AS units FROM test_runs GROUP BY lot_id, step`)
    const runsByKey = new Map(runCounts.map((x: any) => [`${x.lot_id}|${x.step}`, x]))
    expect(steps.length).toBe(runCounts.length)
    for (const s of steps) {
      const c = runsByKey.get(`${s.lot_id}|${s.step}`) as any
      expect({ runs: Number(s.runs), units: Number(s.units) }).toEqual({ runs: Number(c.runs), units: Number(c.units) })
    }
    console.log(JSON.stringify({ backup: 'under-load', ackedBeforeStart: ackedBeforeStart.length, acked: acks.size, held: held.length, bytes: backup.bytes, dumpMs: backup.finishedAt.getTime() - backup.startedAt.getTime() }))
  })
})
