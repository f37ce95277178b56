import { describe, expect, it } from 'vitest'
import { FifoGate } from '../../../server/utils/fifo-gate'

const tick = () => new Promise((r) => setTimeout(r, 1))

describe('FifoGate', () => {
  it('lets at most `limit` holders in at once and admits the rest in arrival order', async () => {
    const gate = new FifoGate(2)
    let inside = 0
    let most = 0
    const order: number[] = []
    await Promise.all(Array.from({ length: 8 }, (_, i) => gate.run(async () => {
      inside++
      most = Math.max(most, inside)
      order.push(i)
      await tick()
      inside--
    })))
    expect(most).toBe(2)
    expect(order).toEqual([0, 1, 2, 3, 4, 5, 6, 7])
  })

  it('frees the slot when the work fails', async () => {
    const gate = new FifoGate(1)
    await expect(gate.run(async () => { throw new Error('boom') })).rejects.toThrow('boom')
    expect(await gate.run(async () => 'next')).toBe('next')
  })

  it('is idle only while nobody holds a slot', async () => {
    const gate = new FifoGate(1)
    expect(gate.idle).toBe(true)
    let release!: () => void
    const held = gate.run(() => new Promise<void>((r) => { release = r }))
    expect(gate.idle).toBe(false)
    const queued = gate.run(async () => 'second')
    release()
    await held
    expect(gate.idle).toBe(false)
    expect(await queued).toBe('second')
    expect(gate.idle).toBe(true)
  })

  it('refuses a limit below one', () => {
    expect(() => new FifoGate(0)).toThrow(RangeError)
  })
})
