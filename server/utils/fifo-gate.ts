/**
 * At most `limit` holders at a time; the rest wait in arrival order. Used to keep the number of write
 * transactions in flight near what the database can run at once, so waiting happens in one fair queue here
 * rather than as lock and scheduler contention inside the database.
 */
export class FifoGate {
  private active = 0
  private queue: (() => void)[] = []
  constructor(readonly limit: number) {
    if (!Number.isInteger(limit) || limit < 1) throw new RangeError(`limit must be a positive integer, got ${limit}`)
  }

  /** No holder at all: a caller that would rather not wait can check this first. */
  get idle(): boolean {
    return this.active === 0
  }

  async run<T>(work: () => Promise<T>): Promise<T> {
    if (this.active >= this.limit) await new Promise<void>((admit) => this.queue.push(admit))
    else this.active++
    try {
      return await work()
    } finally {
      const next = this.queue.shift()
      // the slot passes straight to the next waiter, so `active` counts it without a gap
      if (next) next()
      else this.active--
    }
  }
}
