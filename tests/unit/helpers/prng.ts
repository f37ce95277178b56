// Deterministic pseudo-random numbers for reproducible cross-checks.

// The same generator the demo fixtures use.
export { mulberry32 } from '../../../fixtures/run-generator'

/** Standard normal draws by the Box–Muller transform. */
export function gaussian(uniform: () => number): () => number {
  let spare: number | null = null
  return () => {
    if (spare !== null) {
      const s = spare
      spare = null
      return s
    }
    // 1 − u lies in (0, 1], so the logarithm stays finite.
    const r = Math.sqrt(-2 * Math.log(1 - uniform()))
    const theta = 2 * Math.PI * uniform()
    spare = r * Math.sin(theta)
    return r * Math.cos(theta)
  }
}

/** n draws from N(mean, sd²). */
export function normalSample(rand: () => number, n: number, mean = 0, sd = 1): number[] {
  const g = gaussian(rand)
  return Array.from({ length: n }, () => mean + sd * g())
}
