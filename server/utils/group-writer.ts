/**
 * Gathers work items that arrive while earlier ones are being written and writes them together: at most `lanes`
 * groups in flight, each of at most `maxGroup` items, taken in arrival order. A lone item is written at once; under
 * load, items queue while every lane is busy and the next free lane takes all of them (up to `maxGroup`) in one go.
 */
export class GroupWriter<T, R> {
  private queue: { item: T; done: (r: R) => void; fail: (e: unknown) => void }[] = []
  private active = 0

  constructor(
    private readonly write: (items: T[]) => Promise<R[]>,
    readonly lanes: number,
    readonly maxGroup: number,
  ) {
    if (!Number.isInteger(lanes) || lanes < 1) throw new RangeError(`lanes must be a positive integer, got ${lanes}`)
    if (!Number.isInteger(maxGroup) || maxGroup < 1) throw new RangeError(`maxGroup must be a positive integer, got ${maxGroup}`)
  }

  /** Items waiting for a lane. */
  get waiting(): number {
    return this.queue.length
  }

  submit(item: T): Promise<R> {
    return new Promise<R>((done, fail) => {
      this.queue.push({ item, done, fail })
      this.pump()
    })
  }

  private pump(): void {
    while (this.active < this.lanes && this.queue.length) {
      const group = this.queue.splice(0, this.maxGroup)
      this.active++
      this.write(group.map((g) => g.item))
        .then((results) => {
          if (results.length !== group.length) throw new Error(`a group of ${group.length} was answered with ${results.length} results`)
          group.forEach((g, i) => g.done(results[i]!))
        })
        .catch((e) => { for (const g of group) g.fail(e) })
        .finally(() => {
          this.active--
          this.pump()
        })
    }
  }
}
