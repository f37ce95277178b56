// One log line when the database becomes unreachable and one when it answers again, with what was refused in
// between, instead of a stack trace per request, per pooled connection attempt and per background pass.
import { isDatabaseUnavailable } from './database-unavailable'

export type FaultWriter = (line: Record<string, unknown>) => void

type Outage = { since: number; requests: number; batchRuns: number; jobPasses: Record<string, number> }

/** The error in one short phrase: its code and the first line of its message, never a stack or a statement. */
export function faultSummary(error: unknown): string {
  const e = error as { code?: unknown; message?: unknown; cause?: unknown; errors?: unknown } | null
  const inner = e?.cause && isDatabaseUnavailable(e.cause) ? e.cause : Array.isArray(e?.errors) && e.errors.length ? e.errors[0] : e
  const x = inner as { code?: unknown; message?: unknown } | null
  const code = typeof x?.code === 'string' ? x.code : ''
  const message = String(x?.message ?? x ?? '').split('\n')[0]!.slice(0, 200)
  return code && !message.includes(code) ? `${code}: ${message}` : message
}

export class DatabaseFaultLog {
  private outage: Outage | undefined
  private probing: ReturnType<typeof setInterval> | undefined

  constructor(
    private readonly write: FaultWriter,
    /** answers when the database does; polled while it is away, so the end is logged even with no traffic */
    private probe?: () => Promise<unknown>,
    private readonly probeMs = 1000,
    private readonly now: () => number = Date.now,
  ) {}

  setProbe(probe: () => Promise<unknown>): void {
    this.probe = probe
  }

  get down(): boolean {
    return this.outage !== undefined
  }

  /**
   * Notes one refusal caused by the database being away: `request` (a response answered 503), `batch-run` (a run of a
   * batch answered 503) or the name of a background job whose pass stopped. Returns false, logging nothing, when the
   * error is not a database fault (the caller reports it as it would any other).
   */
  fault(source: string, error: unknown): boolean {
    if (!isDatabaseUnavailable(error)) return false
    if (!this.outage) {
      this.outage = { since: this.now(), requests: 0, batchRuns: 0, jobPasses: {} }
      this.write({ level: 'warn', event: 'database-unavailable', source, error: faultSummary(error) })
      this.startProbe()
    }
    if (source === 'request') this.outage.requests++
    else if (source === 'batch-run') this.outage.batchRuns++
    else this.outage.jobPasses[source] = (this.outage.jobPasses[source] ?? 0) + 1
    return true
  }

  /** The database answered (a probe, a background pass): ends an outage in progress with its figures. */
  answered(): void {
    const o = this.outage
    if (!o) return
    this.outage = undefined
    if (this.probing) { clearInterval(this.probing); this.probing = undefined }
    this.write({
      level: 'warn', event: 'database-available', downMs: this.now() - o.since,
      answered503: o.requests, batchRuns503: o.batchRuns, jobPassesStopped: o.jobPasses,
    })
  }

  stop(): void {
    if (this.probing) { clearInterval(this.probing); this.probing = undefined }
  }

  private startProbe(): void {
    if (!this.probe || this.probing) return
    let busy = false
    this.probing = setInterval(() => {
      if (busy || !this.probe) return
      busy = true
      this.probe().then(() => this.answered(), () => {}).finally(() => { busy = false })
    }, this.probeMs)
    this.probing.unref?.()
  }
}

/** Fault lines go to stderr as one JSON object each, like the request log's lines on stdout. */
export const writeFaultLine: FaultWriter = (line) => {
  console.warn(JSON.stringify({ time: new Date().toISOString(), ...line }))
}

/** The process's one fault log; server/plugins/db-lifecycle.ts gives it the database probe. */
export const databaseFaults = new DatabaseFaultLog(writeFaultLine)
