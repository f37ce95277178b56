import { describe, expect, it } from 'vitest'
import { OrderedPipeline } from '../../../server/utils/ordered-pipeline'

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('OrderedPipeline', () => {
  it('hands results back in push order although later tasks finish first', async () => {
    const p = new OrderedPipeline<number>(4, 10)
    const got: number[] = []
    const delays = [40, 5, 20, 1, 10]
    for (let i = 0; i < delays.length; i++) got.push(...await p.push(`k${i}`, 1, async () => { await sleep(delays[i]!); return i }))
    got.push(...await p.finish())
    expect(got).toEqual([0, 1, 2, 3, 4])
  })

  it('runs tasks of one key one after another, and different keys side by side', async () => {
    const p = new OrderedPipeline<string>(4, 10)
    const log: string[] = []
    let running = 0
    let peak = 0
    const task = (name: string, ms: number) => async () => {
      running++; peak = Math.max(peak, running); log.push(`start ${name}`)
      await sleep(ms)
      log.push(`end ${name}`); running--
      return name
    }
    await p.push('lot-a', 1, task('a1', 30))
    await p.push('lot-a', 1, task('a2', 1))
    await p.push('lot-b', 1, task('b1', 5))
    expect(await p.finish()).toEqual(['a1', 'a2', 'b1'])
    expect(log.indexOf('start a2')).toBeGreaterThan(log.indexOf('end a1'))
    expect(log.indexOf('start b1')).toBeLessThan(log.indexOf('end a1'))
    expect(peak).toBe(2)
  })

  it('never runs more than `parallel` tasks at once', async () => {
    const p = new OrderedPipeline<number>(2, 100)
    let running = 0
    let peak = 0
    for (let i = 0; i < 8; i++) {
      await p.push(`k${i}`, 1, async () => { running++; peak = Math.max(peak, running); await sleep(5); running--; return i })
    }
    expect(await p.finish()).toHaveLength(8)
    expect(peak).toBe(2)
  })

  it('makes push wait while the window is full, by count and by weight', async () => {
    const byCount = new OrderedPipeline<number>(8, 2)
    let started = 0
    const slow = (i: number) => async () => { started++; await sleep(20); return i }
    expect(await byCount.push('a', 1, slow(0))).toEqual([])
    expect(await byCount.push('b', 1, slow(1))).toEqual([])
    const third = await byCount.push('c', 1, slow(2))
    expect(third).toEqual([0])
    expect(started).toBe(3)

    const byWeight = new OrderedPipeline<number>(8, 100, 10)
    expect(await byWeight.push('a', 6, slow(0))).toEqual([])
    expect(await byWeight.push('b', 6, slow(1))).toEqual([0])
  })

  it('raises a failed task at its place, after the results before it', async () => {
    const p = new OrderedPipeline<number>(4, 10)
    const got: number[] = []
    got.push(...await p.push('a', 1, async () => { await sleep(15); return 1 }))
    got.push(...await p.push('b', 1, async () => { throw new Error('boom') }))
    got.push(...await p.push('c', 1, async () => 3))
    expect(got).toEqual([])
    await expect(p.finish()).resolves.toEqual([1])
    await expect(p.finish()).rejects.toThrow('boom')
    await expect(p.finish()).resolves.toEqual([3])
  })
})
