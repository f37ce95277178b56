// Deterministic pseudo-random numbers for reproducible cross-checks.

/** mulberry32: 32-bit state, uniform in [0, 1) (T. Ettinger's public-domain generator). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

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
