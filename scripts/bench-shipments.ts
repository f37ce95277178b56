// npm run bench:shipments — the shipping checks at the largest shipment, on a fresh bench database (services called
// directly, no HTTP). Tests BENCH_SHIP_UNITS units (default 10,000) of the demo tripler through every step, releases
// their lot, then on a draft shipment times: the preview of a 10,000-line list of their serials (previewMs), adding
// its passing units in one transaction (addMs), and the release with every unit checked and its certificate issued
// (releaseMs). Prints one JSON line; progress goes to stderr.
import { resolve } from 'node:path'
import { performance } from 'node:perf_hooks'
import { dbSettings, loadEnv, root } from './lib/env.mjs'
import { prepareDatabase } from './lib/database.mjs'
import { createKnex } from '../server/database/connection'
import { testedShipment } from '../fixtures/tested-shipment'
import { createShipment } from '../server/services/shipments/drafts'
import { addSerials, previewSerials } from '../server/services/shipments/serials'
import { releaseShipment } from '../server/services/shipments/release'

const DB = 'tercet_bench_ship'
const UNITS = Number(process.env.BENCH_SHIP_UNITS || 10_000)
const say = (m: string) => process.stderr.write(`[bench] ${m}\n`)

async function main() {
  const env = loadEnv()
  await prepareDatabase(env, DB, { recreate: true, seed: true, tokenFile: resolve(root, '.data/bench-ship-tokens.json') })
  const s = dbSettings(env, DB)
  const db = createKnex({ host: '127.0.0.1', port: s.port, user: s.user, password: s.password, database: DB })
  try {
    say(`testing ${UNITS} units through every step…`)
    const set = await testedShipment(db, { tag: 'BSHIP', count: UNITS, issue: false })
    // the fixture puts them on a shipment of its own: free them, and release their lot
    await db('shipment_units').where({ shipment_id: set.shipmentId }).delete()
    await db('lots').where({ code: 'BSHIP-L' }).update({ status: 'released', released_at: new Date() })
    const { id } = await createShipment(db, set.qualityId, { customerId: set.customerId })
    const lines = set.units.map((u) => u.serial)

    let t = performance.now()
    const preview = await previewSerials(db, id, { lines })
    const previewMs = performance.now() - t
    say(`preview: ${preview.addable} addable of ${preview.rows.length} rows`)
    // a few generated units fail a limit: the list that is added holds the passing ones
    const passing = preview.rows.filter((r) => r.verdict === 'ok').map((r) => r.serial!)
    t = performance.now()
    const added = await addSerials(db, set.qualityId, id, { lines: passing })
    const addMs = performance.now() - t
    t = performance.now()
    const released = await releaseShipment(db, set.qualityId, id, { signed: { method: 'password', at: new Date().toISOString() } })
    const releaseMs = performance.now() - t
    console.log(JSON.stringify({ units: UNITS, previewMs: +previewMs.toFixed(0), addMs: +addMs.toFixed(0), releaseMs: +releaseMs.toFixed(0), added: added.added, certificates: released.certificates }))
  } finally {
    await db.destroy()
  }
}

main().catch((e) => { console.error(e); process.exit(1) })
