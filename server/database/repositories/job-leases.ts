// Named leases in job_leases: the one app instance holding a job's row until `lease_until` runs the job; a holder
// that dies simply stops renewing, and after its lease runs out the next instance takes it. Every step is one
// conditional statement, so two instances never both believe they hold it.
import type { Knex } from 'knex'

/**
 * Takes the lease, or renews it for its holder, until `now + ms`. True when `owner` holds it afterwards. The clock
 * is the caller's (each instance's own); leases last many times any plausible skew between app hosts.
 */
export async function takeLease(db: Knex, name: string, owner: string, ms: number, now = new Date()): Promise<boolean> {
  await db.raw('INSERT IGNORE INTO job_leases (name) VALUES (?)', [name])
  await db.raw(
    'UPDATE job_leases SET owner = ?, lease_until = ? WHERE name = ? AND (owner IS NULL OR owner = ? OR lease_until IS NULL OR lease_until <= ?)',
    [owner, new Date(now.getTime() + ms), name, owner, now])
  const row = await db('job_leases').where({ name }).first('owner')
  return row?.owner === owner
}

/** Gives the lease up at once (at shutdown), only if `owner` still holds it. */
export async function releaseLease(db: Knex, name: string, owner: string): Promise<void> {
  await db('job_leases').where({ name, owner }).update({ owner: null, lease_until: null })
}

/**
 * For a job run every `everyMs` by whichever instance: true (and the run recorded) when the last run is at least
 * that old. One conditional UPDATE, so of two instances asking at once only one is told to run.
 */
export async function claimPeriodicRun(db: Knex, name: string, everyMs: number, now = new Date()): Promise<boolean> {
  await db.raw('INSERT IGNORE INTO job_leases (name) VALUES (?)', [name])
  const [r] = await db.raw('UPDATE job_leases SET last_run_at = ? WHERE name = ? AND (last_run_at IS NULL OR last_run_at <= ?)',
    [now, name, new Date(now.getTime() - everyMs)])
  return Number((r as { affectedRows?: number }).affectedRows ?? 0) === 1
}

/**
 * Extends the lease of its holder inside the caller's transaction; false when another instance took it meanwhile.
 * The updated row stays locked until the transaction ends, so nobody takes the lease between this check and commit.
 */
export async function renewHeldLease(db: Knex, name: string, owner: string, ms: number, now = new Date()): Promise<boolean> {
  const [r] = await db.raw('UPDATE job_leases SET lease_until = ? WHERE name = ? AND owner = ?', [new Date(now.getTime() + ms), name, owner])
  return Number((r as { affectedRows?: number }).affectedRows ?? 0) === 1
}

/** Removes a lease whose job has ended for good. */
export async function dropLease(db: Knex, name: string): Promise<void> {
  await db('job_leases').where({ name }).del()
}
