// Carries on imports whose worker is gone: any app instance takes the lease of a running import once it ran out,
// counts the resume (with its audit row) and works through the stored file from the job's line cursor. Uploads whose
// receiving instance died before the file arrived whole are removed with what was stored of them.
import type { Knex } from 'knex'
import type { ImportJob } from '../../shared/types/imports'
import { writeAudit } from '../database/repositories/audit'
import { findImportJob } from '../database/repositories/imports'
import { abandonedUploads, countResume, importLeaseName, importsToResume } from '../database/repositories/import-uploads'
import { dropLease, takeLease } from '../database/repositories/job-leases'
import { IMPORT_WORKER_ID, importLeaseMs } from './import-lease'
import { activeImports, discardUnreceivedUpload, importJobView, runImport } from './imports'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

/** At most this many imports run in one process at once; the others wait for a free worker anywhere. */
const MAX_ACTIVE = 2

// jobs this process is taking on right now: the worker and the resume route never both count one resume
const claiming = new Set<string>()

/** Takes the job's lease when it is free and records the resume; true when this process now carries it on. */
async function takeOver(db: Knex, id: string, actorId: number | null, now: Date): Promise<boolean> {
  if (claiming.has(id) || activeImports.has(id)) return false
  claiming.add(id)
  try {
    return await claim(db, id, actorId, now)
  } finally {
    claiming.delete(id)
  }
}

async function claim(db: Knex, id: string, actorId: number | null, now: Date): Promise<boolean> {
  const lease = importLeaseName(id)
  return writeTransaction(db, async (trx) => {
    if (!(await takeLease(trx, lease, IMPORT_WORKER_ID, importLeaseMs(), now))) return false
    const job = await findImportJob(trx, id)
    if (!job || job.status !== 'running') {
      await dropLease(trx, lease)
      return false
    }
    await countResume(trx, id)
    await writeAudit(trx, {
      userId: actorId, stationId: job.station.id, action: 'resume', entity: 'import_job', entityId: id,
      before: { linesDone: job.linesDone, resumes: job.resumes }, after: { resumes: job.resumes + 1, worker: IMPORT_WORKER_ID },
    })
    return true
  })
}

/** One pass of the import worker (every second on each instance). */
export async function resumeImports(db: Knex, now = new Date()): Promise<string[]> {
  for (const id of await abandonedUploads(db, new Date(now.getTime() - 60_000), now)) {
    await discardUnreceivedUpload(db, id)
  }
  const taken: string[] = []
  if (activeImports.size >= MAX_ACTIVE) return taken
  for (const id of await importsToResume(db, 10, now)) {
    if (activeImports.size >= MAX_ACTIVE) break
    if (activeImports.has(id) || !(await takeOver(db, id, null, now))) continue
    taken.push(id)
    void runImport(db, id)
  }
  return taken
}

/**
 * Carries on a stuck import in this process at once (the page's one-click resume), whatever the worker's own limit:
 * 409 while another server holds its lease, or once it has ended.
 */
export async function resumeImport(db: Knex, actorId: number, id: string, now = new Date()): Promise<ImportJob> {
  const job = await findImportJob(db, id)
  if (!job) throw new RuleError(404, 'No such import.')
  if (job.status !== 'running') throw new RuleError(409, 'The import has already ended.', [], { importStatus: job.status })
  if (job.uploadBytes === null) throw new RuleError(409, 'This import kept no copy of its file; import the file again (stored runs are replayed).')
  if (!activeImports.has(id) && !claiming.has(id)) {
    if (!(await takeOver(db, id, actorId, now))) throw new RuleError(409, 'Another server is carrying this import on; its progress will move shortly.')
    void runImport(db, id)
  }
  return importJobView((await findImportJob(db, id))!, now)
}
