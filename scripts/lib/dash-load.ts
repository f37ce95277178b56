// The dashboard bench's bulk loader: one lot of the demo tripler grown to a number of measurements by SQL run inside
// MariaDB from its sequence tables, with what a stored run leaves behind (units, runs with their verdicts, unit step
// rows, measurements with the limits they were judged by) and nothing the aggregates hold: the caller rebuilds those.
import type { Knex } from 'knex'
import { findUserById } from '../../server/database/repositories/users'
import { listLimitsOf } from '../../server/database/repositories/spec-revisions'
import { approveRevision, createDraftRevision, replaceDraftLimits } from '../../server/services/spec-revisions'
import { generateStationToken } from '../../server/utils/station-token'

export const PART = 'VFW-T3-375'
export const SERIAL_PREFIX = 'BD'
/** seconds between two units' first tests; a lot of 500,000 units spans some 35 days */
const UNIT_SPACING_S = 6
const STEP_SPACING_S = 1200
const CHUNK_UNITS = 20_000
/** retests: a unit whose seq % modulus = remainder fails its first attempt at that step and is tested again */
const RETEST_LAST = { modulus: 31, remainder: 7 }
const RETEST_MIDDLE = { modulus: 97, remainder: 11 }
/** an output power no revision accepts: the failing first attempt of a unit that is retested */
const FAILING_POWER = 9.4
export const BENCH_STATIONS = ['BENCH-DASH-1', 'BENCH-DASH-2', 'BENCH-DASH-3', 'BENCH-DASH-4']

/**
 * How the tripler's values spread at each step (means and spreads as the run generator and the catalogue's typical
 * values give them). `k` picks the noise stream; output_frequency and frequency_error share one, so the derived
 * error is the one the frequency shows. `u` is the uncertainty a station posts with the value.
 */
type Model = { name: string; q: number; unit: string; mu: number; sd: number; u: number | null; k: number; derived?: boolean }
const PN = [[100, -116.9], [300, -127.2], [1000, -136.9], [3000, -142.4], [10_000, -146.9], [30_000, -150.1], [100_000, -151.9], [300_000, -153.1], [1_000_000, -153.9]] as const
const MODELS: Record<string, Model[]> = {
  tune: [
    { name: 'output_power', q: 0, unit: 'dBm', mu: 7, sd: 0.4, u: 0.3, k: 0 },
    { name: 'tune_code', q: 0, unit: 'count', mu: 512, sd: 9, u: null, k: 1 },
  ],
  'burn-in': [
    { name: 'output_power', q: 0, unit: 'dBm', mu: 7, sd: 0.4, u: 0.3, k: 0 },
    { name: 'supply_current', q: 0, unit: 'mA', mu: 78, sd: 2.3, u: null, k: 1 },
    { name: 'case_temperature', q: 0, unit: 'degC', mu: 41, sd: 1.2, u: null, k: 2 },
  ],
  final: [
    { name: 'output_power', q: 0, unit: 'dBm', mu: 7, sd: 0.35, u: 0.3, k: 0 },
    { name: 'output_frequency', q: 0, unit: 'Hz', mu: 375e6, sd: 0.35 * 375, u: 0.75, k: 1 },
    { name: 'frequency_error', q: 0, unit: 'ppm', mu: 0, sd: 0.35, u: 0.002, k: 1, derived: true },
    { name: 'harmonic_rejection', q: 1, unit: 'dB', mu: 38, sd: 1.5, u: 0.8, k: 2 },
    { name: 'harmonic_rejection', q: 2, unit: 'dB', mu: 33, sd: 1.5, u: 0.8, k: 3 },
    { name: 'harmonic_rejection', q: 4, unit: 'dB', mu: 45, sd: 1.5, u: 0.8, k: 4 },
    { name: 'supply_current', q: 0, unit: 'mA', mu: 78, sd: 2.3, u: null, k: 5 },
    ...PN.map(([f, mu], i) => ({ name: 'phase_noise', q: f, unit: 'dBc/Hz', mu, sd: 0.45, u: 1, k: 6 + i })),
    { name: 'integrated_jitter', q: 0, unit: 's', mu: 14.3e-15, sd: 0.5e-15, u: null, k: 15, derived: true },
    { name: 'case_temperature', q: 0, unit: 'degC', mu: 41, sd: 1.2, u: null, k: 16 },
    { name: 'supply_voltage', q: 0, unit: 'V', mu: 5, sd: 0.01, u: null, k: 17 },
    { name: 'spur_level', q: 0, unit: 'dBc', mu: -82, sd: 2, u: null, k: 18 },
  ],
}

export type DashLot = {
  id: number; code: string; productId: number; steps: string[]
  /** bulk serials are the prefix and a 9-digit sequence number */
  prefix: string
  /** epoch seconds of unit 0's first test and of the second revision taking effect */
  base: number; splitAt: number
  revisions: { first: number; second: number }
  stations: { id: number; name: string }[]
}

/** Measurements a unit adds on average, retests included. */
export function measurementsPerUnit(steps: string[]): number {
  const n = (s: string | undefined) => (s ? MODELS[s]!.length : 0)
  return steps.reduce((a, s) => a + n(s), 0) + n(steps[steps.length - 1]) / RETEST_LAST.modulus + (steps.length > 1 ? n(steps[steps.length - 2]) / RETEST_MIDDLE.modulus : 0)
}

/** Revision 2 of the part, drafted by the engineer and approved by quality through the service, effective at `at`. */
async function approveSecondRevision(db: Knex, at: Date): Promise<number> {
  const engineer = await db('users').where({ email: 'engineer@tercet.test' }).first('id')
  const quality = await findUserById(db, (await db('users').where({ email: 'quality@tercet.test' }).first('id')).id)
  const draft = await createDraftRevision(db, engineer.id, PART, at)
  // tighter output power and close-in phase noise at the final step
  const limits = (await listLimitsOf(db, draft.id)).map((l) => {
    if (l.step === 'final' && l.name === 'output_power') return { ...l, lsl: 5.7, usl: 8.3 }
    if (l.step === 'final' && l.name === 'phase_noise' && l.qualifier === 10_000) return { ...l, usl: -145 }
    return l
  })
  await replaceDraftLimits(db, engineer.id, draft.id, limits)
  await approveRevision(db, quality!, draft.id, { effectiveAt: at, note: 'Tighter output power and 10 kHz phase noise (bench)' }, at)
  return draft.id
}

/** Bench stations, each with a fresh token (the tokens of an earlier run are stored only as hashes). */
async function benchStations(db: Knex): Promise<{ id: number; name: string; token: string }[]> {
  const out: { id: number; name: string; token: string }[] = []
  for (const name of BENCH_STATIONS) {
    const row = await db('stations').where({ name }).first('id')
    const id = row ? Number(row.id) : Number((await db('stations').insert({ name, location: 'bench rack' }))[0])
    const t = generateStationToken()
    await db('station_tokens').insert({ station_id: id, token_hash: t.hash, hint: t.hint })
    out.push({ id, name, token: t.token })
  }
  return out
}

/**
 * The bench lot, made on first use: created 40 days ago, units one every 6 s from a day later, revision 2 taking
 * effect at unit `splitUnit`'s first test. Answers the lot and one token per bench station.
 */
export async function openDashLot(db: Knex, code: string, splitUnit: number): Promise<{ lot: DashLot; tokens: { name: string; token: string }[] }> {
  const product = await db('products').where({ part_number: PART }).first('id', 'steps')
  const steps: string[] = typeof product.steps === 'string' ? JSON.parse(product.steps) : product.steps
  for (const s of steps) if (!MODELS[s]) throw new Error(`the bench has no values for step ${s} of ${PART}`)
  let row = await db('lots').where({ code }).first('id', 'created_at')
  if (!row) {
    await db('lots').insert({ product_id: product.id, code, planned_qty: 1_000_000, created_at: new Date(Date.now() - 40 * 86_400_000) })
    row = await db('lots').where({ code }).first('id', 'created_at')
  }
  const base = Math.floor(new Date(row.created_at).getTime() / 1000) + 86_400
  const revs = await db('spec_revisions').where({ product_id: product.id }).whereIn('status', ['approved', 'superseded']).orderBy('revision').select('id', 'revision')
  const first = Number(revs[0].id)
  const splitAt = base + splitUnit * UNIT_SPACING_S
  const second = revs.length > 1 ? Number(revs[1].id) : await approveSecondRevision(db, new Date(splitAt * 1000))
  const effective = await db('spec_revisions').where({ id: second }).first('effective_at')
  const stations = await benchStations(db)
  for (const s of ['ATE-T3-01', 'ATE-T3-02']) {
    const r = await db('stations').where({ name: s }).first('id')
    if (r) stations.push({ id: Number(r.id), name: s, token: '' })
  }
  // every limited parameter of both revisions must have values here, or the lot would miss required measurements
  const limited = await db('spec_limits').whereIn('revision_id', [first, second]).select('step', 'name', 'qualifier')
  for (const l of limited) {
    if (!MODELS[l.step]?.some((m) => m.name === l.name && m.q === Number(l.qualifier))) throw new Error(`the bench has no values for ${l.step} ${l.name} ${l.qualifier}`)
  }
  return {
    lot: {
      id: Number(row.id), code, productId: Number(product.id), steps, prefix: SERIAL_PREFIX, base,
      splitAt: Math.floor(new Date(effective.effective_at).getTime() / 1000), revisions: { first, second },
      stations: stations.map(({ id, name }) => ({ id, name })),
    },
    tokens: stations.filter((s) => s.token).map(({ name, token }) => ({ name, token })),
  }
}

const sqlText = (s: string) => `'${s.replace(/'/g, "''")}'`
const num = (x: number | null) => (x === null ? 'NULL' : String(x))

/** The steps of one unit as rows: attempt 1 of each step, and attempt 2 of the middle and last steps for retested units. */
function stepRows(steps: string[]): string {
  const rows: string[] = []
  steps.forEach((s, i) => {
    rows.push(`SELECT ${sqlText(s)} AS step, ${i} AS i, 1 AS attempt, ${i * STEP_SPACING_S} AS off, ${s === steps[steps.length - 1] ? 110 : 50} AS dur, 0 AS m, 0 AS r`)
  })
  const last = steps.length - 1
  rows.push(`SELECT ${sqlText(steps[last]!)}, ${last + 1}, 2, ${last * STEP_SPACING_S + STEP_SPACING_S / 2}, 110, ${RETEST_LAST.modulus}, ${RETEST_LAST.remainder}`)
  if (steps.length > 1) rows.push(`SELECT ${sqlText(steps[last - 1]!)}, ${last + 2}, 2, ${(last - 1) * STEP_SPACING_S + STEP_SPACING_S / 2}, 50, ${RETEST_MIDDLE.modulus}, ${RETEST_MIDDLE.remainder}`)
  return rows.join(' UNION ALL ')
}

function modelRows(steps: string[]): string {
  return steps.flatMap((s) => MODELS[s]!.map((m) =>
    `SELECT ${sqlText(s)} AS step, ${sqlText(m.name)} AS name, ${m.q} AS qualifier, ${sqlText(m.unit)} AS unit, ${m.mu} AS mu, ${m.sd} AS sd, ${num(m.u)} AS u, ${m.k} AS k, ${m.derived ? 1 : 0} AS derived`,
  )).join(' UNION ALL ')
}

/** Irwin–Hall sum of four uniform draws hashed from the run and the stream: deterministic, mean 0, σ 1, bounded at ±3.46. */
const NOISE = '((CRC32(r.id * 128 + p.k * 4) + CRC32(r.id * 128 + p.k * 4 + 1) + CRC32(r.id * 128 + p.k * 4 + 2) + CRC32(r.id * 128 + p.k * 4 + 3)) / 4294967296.0 - 2) * 1.7320508'

/** Units `from`..`to` (sequence numbers) of the lot, with their runs, measurements and unit step rows, in one transaction. */
async function loadChunk(db: Knex, lot: DashLot, from: number, to: number): Promise<void> {
  const stationIds = lot.stations.map((s) => s.id).join(', ')
  const last = lot.steps[lot.steps.length - 1]!
  const middle = lot.steps.length > 1 ? lot.steps[lot.steps.length - 2]! : ''
  const serial = (seq: string) => `CONCAT(${sqlText(lot.prefix)}, LPAD(${seq}, 9, '0'))`
  const retested = (seqExpr: string) =>
    `((r.step = ${sqlText(last)} AND ${seqExpr} % ${RETEST_LAST.modulus} = ${RETEST_LAST.remainder}) OR (r.step = ${sqlText(middle)} AND ${seqExpr} % ${RETEST_MIDDLE.modulus} = ${RETEST_MIDDLE.remainder}))`
  await db.transaction(async (trx) => {
    const [[{ maxId }]] = await trx.raw('SELECT COALESCE(MAX(id), 0) AS maxId FROM test_runs')
    await trx.raw(`INSERT INTO units (product_id, lot_id, serial, created_at) SELECT ?, ?, ${serial('seq')}, FROM_UNIXTIME(? + seq * ${UNIT_SPACING_S}) FROM seq_${from}_to_${to}`,
      [lot.productId, lot.id, lot.base])
    const t = `(? + s.seq * ${UNIT_SPACING_S} + st.off)`
    await trx.raw(
      `INSERT INTO test_runs (uuid, body_hash, unit_id, lot_id, station_id, revision_id, step, attempt, started_at, finished_at, received_at,
         operator, software_sequence, software_version, temperature_c, supply_v, station_verdict, server_verdict)
       SELECT UUID(), REPEAT('0', 64), u.id, ?, ELT(1 + (s.seq + st.i) % ${lot.stations.length}, ${stationIds}),
              IF(${t} >= ?, ?, ?), st.step, st.attempt, FROM_UNIXTIME(${t}), FROM_UNIXTIME(${t} + st.dur), FROM_UNIXTIME(${t} + st.dur + 2),
              'bench', CONCAT('T3-', st.step), '4.2.0', 22.5 + (s.seq % 7) * 0.25, 5.0, 'pass', 'pass'
       FROM seq_${from}_to_${to} s JOIN units u ON u.product_id = ? AND u.serial = ${serial('s.seq')}
         JOIN (${stepRows(lot.steps)}) st ON st.attempt = 1 OR s.seq % st.m = st.r
       ORDER BY s.seq, st.off`,
      [lot.id, lot.base, lot.splitAt, lot.revisions.second, lot.revisions.first, lot.base, lot.base, lot.base, lot.productId])
    const seqOf = `CAST(SUBSTRING(u.serial, ${lot.prefix.length + 1}) AS UNSIGNED)`
    // a derived table merged into the outer query re-evaluates `v` wherever it is used: the noise is a hash, not RAND()
    const v = 'x.v'
    const w = 'COALESCE(x.u, l.default_uncertainty, 0)'
    const lo = 'COALESCE(l.lsl, -1e300)'
    const hi = 'COALESCE(l.usl, 1e300)'
    const inside = `(${v} >= ${lo} + ${w} AND ${v} <= ${hi} - ${w})`
    await trx.raw(
      `INSERT INTO measurements (run_id, lot_id, station_id, revision_id, step, first_attempt, started_at, name, qualifier, value, unit, uncertainty,
         lsl, usl, target, rule, guard_band, verdict, zone, derived, excess_db, implausible, at_offset_hz)
       SELECT x.id, ?, x.station_id, x.revision_id, x.step, x.attempt = 1, x.started_at, x.name, x.qualifier, ${v}, x.unit, x.u,
              l.lsl, l.usl, l.target, l.rule, IF(l.id IS NULL, NULL, ${w}),
              IF(l.id IS NULL, 'info', IF(IF(l.rule = 'guarded', ${inside}, ${v} >= ${lo} AND ${v} <= ${hi}), 'pass', 'fail')),
              IF(l.id IS NULL, NULL, IF(${inside}, 'inside', IF(${v} >= ${lo} - ${w} AND ${v} <= ${hi} + ${w}, 'guard', 'outside'))),
              x.derived, NULL, 0, NULL
       FROM (SELECT r.id, r.station_id, r.revision_id, r.step, r.attempt, r.started_at, p.name, p.qualifier, p.unit, p.u, p.derived,
                    IF(r.attempt = 1 AND p.name = 'output_power' AND ${retested(seqOf)}, ${FAILING_POWER}, ROUND(p.mu + p.sd * ${NOISE}, IF(p.unit = 's', 18, 4))) AS v
             FROM test_runs r JOIN units u ON u.id = r.unit_id JOIN (${modelRows(lot.steps)}) p ON p.step = r.step
             WHERE r.lot_id = ? AND r.id > ?) x
         LEFT JOIN spec_limits l ON l.revision_id = x.revision_id AND l.step = x.step AND l.name = x.name AND l.qualifier = x.qualifier
           AND (l.lsl IS NOT NULL OR l.usl IS NOT NULL)`,
      [lot.id, lot.id, maxId])
    // a run fails when one of its measurements does; the station's plain verdict agrees here
    await trx.raw(
      `UPDATE test_runs r JOIN (SELECT run_id, MAX(verdict = 'fail') AS f FROM measurements WHERE run_id > ? AND lot_id = ? GROUP BY run_id) m ON m.run_id = r.id
       SET r.server_verdict = IF(m.f, 'fail', 'pass'), r.station_verdict = IF(m.f, 'fail', 'pass')`, [maxId, lot.id])
    // attempts were inserted in test order, so the highest id of a unit step is its latest attempt
    await trx.raw(
      `INSERT INTO unit_steps (unit_id, step, attempts, first_verdict, latest_verdict, latest_run_id)
       SELECT unit_id, step, COUNT(*), SUBSTRING_INDEX(GROUP_CONCAT(server_verdict ORDER BY attempt), ',', 1),
              SUBSTRING_INDEX(GROUP_CONCAT(server_verdict ORDER BY attempt DESC), ',', 1), MAX(id)
       FROM test_runs WHERE lot_id = ? AND id > ? GROUP BY unit_id, step`, [lot.id, maxId])
  })
}

/** Bulk units the lot holds (sequence numbers 1..n). */
export async function bulkUnits(db: Knex, lot: DashLot): Promise<number> {
  const [[row]] = await db.raw(`SELECT COUNT(*) AS n FROM units WHERE lot_id = ? AND serial LIKE ${sqlText(lot.prefix + '%')}`, [lot.id])
  return Number(row.n)
}

/** Adds bulk units after the ones loaded so far until the lot holds about `want` measurements; `progress` per chunk. */
export async function growLot(db: Knex, lot: DashLot, have: number, want: number, progress: (units: number) => void): Promise<number> {
  const start = await bulkUnits(db, lot)
  const target = start + Math.ceil(Math.max(0, want - have) / measurementsPerUnit(lot.steps))
  for (let from = start + 1; from <= target; from += CHUNK_UNITS) {
    const to = Math.min(target, from + CHUNK_UNITS - 1)
    await loadChunk(db, lot, from, to)
    progress(to)
  }
  return target - start
}
