// Who carries on an import: the app instance holding its row in job_leases. The holder renews the lease while it
// works; one that dies stops renewing, and once the lease runs out any instance's import worker takes the job on.
import { hostname } from 'node:os'
import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import { renewHeldLease } from '../database/repositories/job-leases'

/** This process, as a lease holder. */
export const IMPORT_WORKER_ID = `${hostname()}:${process.pid}:${randomBytes(3).toString('hex')}`

/** How long a lease lasts without renewal (TERCET_IMPORT_LEASE_MS, default 30 s); it is renewed every third of it. */
export function importLeaseMs(): number {
  const v = Number(process.env.TERCET_IMPORT_LEASE_MS)
  return Number.isFinite(v) && v >= 500 ? v : 30_000
}

export type LeaseKeeper = { lost: () => boolean; stop: () => void }

/** Renews the lease on a timer until stopped; `lost()` tells when another instance took it meanwhile. */
export function keepLease(db: Knex, name: string, owner = IMPORT_WORKER_ID, ms = importLeaseMs()): LeaseKeeper {
  let lost = false
  let busy = false
  const timer = setInterval(() => {
    if (busy || lost) return
    busy = true
    renewHeldLease(db, name, owner, ms)
      .then((held) => { if (!held) lost = true })
      // the database away: the lease runs out unless it comes back in time, and the fenced writes will tell
      .catch(() => {})
      .finally(() => { busy = false })
  }, Math.max(100, Math.floor(ms / 3)))
  timer.unref()
  return { lost: () => lost, stop: () => clearInterval(timer) }
}

/** Thrown inside an import's transactions when its lease went to another instance: that one carries on. */
export class ImportLeaseLost extends Error {
  constructor(jobId: string) {
    super(`The import ${jobId} is now carried on by another server.`)
  }
}
