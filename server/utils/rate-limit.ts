/** Sliding-window failure counter kept in memory (one server process). */
export class FailureWindow {
  private hits = new Map<string, number[]>()
  constructor(private readonly limit: number, private readonly windowMs: number) {}

  /** Seconds until another attempt is allowed, or 0 when allowed now. */
  retryAfter(key: string, now = Date.now()): number {
    const list = this.prune(key, now)
    if (list.length < this.limit) return 0
    return Math.max(1, Math.ceil((list[0]! + this.windowMs - now) / 1000))
  }

  fail(key: string, now = Date.now()): void {
    const list = this.prune(key, now)
    list.push(now)
    this.hits.set(key, list)
  }

  clear(key: string): void { this.hits.delete(key) }

  private prune(key: string, now: number): number[] {
    const list = (this.hits.get(key) ?? []).filter((t) => now - t < this.windowMs)
    if (list.length) this.hits.set(key, list)
    else this.hits.delete(key)
    return list
  }
}

export const signInFailuresByAccount = new FailureWindow(5, 15 * 60_000)
export const signInFailuresByAddress = new FailureWindow(25, 15 * 60_000)
