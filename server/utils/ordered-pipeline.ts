type Slot<R> = { ready: boolean; value?: R; error?: unknown; weight: number; done: Promise<void> }

/**
 * Runs tasks a few at a time while keeping two orders: tasks with the same key run one after another in the
 * order they were pushed, and results come back in push order. push() waits while the tasks not yet handed
 * back exceed the window (by count or by weight), which bounds what the producer can have in memory.
 */
export class OrderedPipeline<R> {
  private queue: Slot<R>[] = []
  private tails = new Map<string, Promise<void>>()
  private active = 0
  private waiting: (() => void)[] = []
  private weight = 0

  constructor(private parallel: number, private maxCount: number, private maxWeight = Infinity) {}

  /** Adds a task; returns the results that are ready in push order, waiting first while the window is full. */
  async push(key: string | null, weight: number, task: () => Promise<R>): Promise<R[]> {
    const before = key === null ? undefined : this.tails.get(key)
    const slot: Slot<R> = { ready: false, weight, done: Promise.resolve() }
    slot.done = (async () => {
      if (before) await before
      await this.acquire()
      try {
        slot.value = await task()
      } catch (e) {
        slot.error = e
      } finally {
        this.release()
        slot.ready = true
      }
    })()
    if (key !== null) {
      this.tails.set(key, slot.done)
      void slot.done.then(() => { if (this.tails.get(key) === slot.done) this.tails.delete(key) })
    }
    this.queue.push(slot)
    this.weight += weight
    const out: R[] = []
    while (this.queue.length > this.maxCount || (this.weight > this.maxWeight && this.queue.length > 1)) {
      await this.queue[0]!.done
      if (this.takeReady(out)) return out
    }
    this.takeReady(out)
    return out
  }

  /** Waits for every task pushed so far and returns their results in push order. */
  async finish(): Promise<R[]> {
    const out: R[] = []
    while (this.queue.length) {
      await this.queue[0]!.done
      if (this.takeReady(out)) return out
    }
    return out
  }

  /** Waits for every task to end, dropping results and errors (after a failure). */
  async settle(): Promise<void> {
    await Promise.all(this.queue.map((s) => s.done))
    this.queue = []
    this.weight = 0
  }

  /**
   * Moves the ready results at the head into out. A failed task is raised at its place in order: when results
   * are already in out, it stops before the failure (true) so that those are handed back first.
   */
  private takeReady(out: R[]): boolean {
    while (this.queue.length && this.queue[0]!.ready) {
      const head = this.queue[0]!
      if (head.error !== undefined && out.length) return true
      this.queue.shift()
      this.weight -= head.weight
      if (head.error !== undefined) throw head.error
      out.push(head.value as R)
    }
    return false
  }

  private acquire(): Promise<void> {
    if (this.active < this.parallel) {
      this.active++
      return Promise.resolve()
    }
    return new Promise((r) => this.waiting.push(r))
  }

  private release(): void {
    const next = this.waiting.shift()
    if (next) next()
    else this.active--
  }
}
