// The folded values of one parameter group after a fold's earliest late value, in test order: for each late value
// of the fold, how many of them come after it and the sum of their d, by binary search over suffix sums. Pure.
import type { TrendValue, ValuesAfter } from './param-trend-merge'
import { inTimeOrder } from './param-stats-merge'

export type TailValue = TrendValue & { firstAttempt: boolean }

export function trendTail(inTestOrder: readonly TailValue[]) {
  const cached = new Map<string, { values: readonly TailValue[]; suffix: Float64Array }>()
  function population(allAttempts: boolean, shift: number) {
    const key = `${allAttempts}\u0000${shift}`
    let p = cached.get(key)
    if (!p) {
      const values = allAttempts ? inTestOrder : inTestOrder.filter((v) => v.firstAttempt)
      // suffix[i]: Σ (value − shift) over values[i…]
      const suffix = new Float64Array(values.length + 1)
      for (let i = values.length - 1; i >= 0; i--) suffix[i] = suffix[i + 1]! + (values[i]!.value - shift)
      p = { values, suffix }
      cached.set(key, p)
    }
    return p
  }
  return {
    /** The tail's values of the population that come after `v` in test order. */
    after(allAttempts: boolean, shift: number, v: TrendValue): ValuesAfter {
      const { values, suffix } = population(allAttempts, shift)
      let lo = 0
      let hi = values.length
      while (lo < hi) {
        const mid = (lo + hi) >> 1
        if (inTimeOrder(v, values[mid]!) < 0) hi = mid; else lo = mid + 1
      }
      return { count: values.length - lo, sumD: suffix[lo]! }
    },
  }
}

export type TrendTail = ReturnType<typeof trendTail>
