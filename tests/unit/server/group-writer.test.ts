import { describe, expect, it } from 'vitest'
import { GroupWriter } from '../../../server/utils/group-writer'

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('GroupWriter', () => {
  it('writes a lone item at once, in a group of one', async () => {
    const groups: number[][] = []
    const w = new GroupWriter<number, number>(async (xs) => { groups.push(xs); return xs.map((x) => x * 2) }, 2, 8)
    expect(await w.submit(21)).toBe(42)
    expect(groups).toEqual([[21]])
  })

  it('gathers what arrives while every lane is busy, in arrival order, up to the group size', async () => {
    const groups: number[][] = []
    let inFlight = 0
    let peak = 0
    const w = new GroupWriter<number, string>(async (xs) => {
      inFlight++; peak = Math.max(peak, inFlight)
      groups.push(xs)
      await sleep(20)
      inFlight--
      return xs.map(String)
    }, 2, 3)
    const answers = await Promise.all(Array.from({ length: 10 }, (_, i) => w.submit(i)))
    expect(answers).toEqual(['0', '1', '2', '3', '4', '5', '6', '7', '8', '9'])
    expect(peak).toBe(2)
    // the first two items find free lanes; the other eight queue and leave in groups of at most three
    expect(groups[0]).toEqual([0])
    expect(groups[1]).toEqual([1])
    expect(groups.slice(2).every((g) => g.length <= 3)).toBe(true)
    expect(groups.flat()).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9])
  })

  it('fails every item of a group whose write throws, and goes on with the next groups', async () => {
    const w = new GroupWriter<number, number>(async (xs) => {
      if (xs.includes(1)) throw new Error('refused')
      return xs
    }, 1, 1)
    const results = await Promise.allSettled([w.submit(0), w.submit(1), w.submit(2)])
    expect(results.map((r) => r.status)).toEqual(['fulfilled', 'rejected', 'fulfilled'])
  })

  it('refuses an answer that does not match its group', async () => {
    const w = new GroupWriter<number, number>(async () => [], 1, 4)
    await expect(w.submit(1)).rejects.toThrow(/answered with 0 results/)
  })
})
