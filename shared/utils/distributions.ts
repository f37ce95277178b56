// Normal, Student t and chi-square distribution kernels, dependency-free.

const SQRT_PI = Math.sqrt(Math.PI)
const SQRT_2PI = Math.sqrt(2 * Math.PI)
const TINY = 1e-300
const EPS = 1e-16

/** erfc(x) for x ≥ 0: power series of erf for small x, continued fraction otherwise (Abramowitz & Stegun 7.1.6, 7.1.14). */
function erfcNonNegative(x: number): number {
  const x2 = x * x
  if (x < 2) {
    // The all-positive series avoids the cancellation of the alternating Taylor series.
    let term = x
    let sum = x
    for (let k = 1; k < 500; k++) {
      term *= (2 * x2) / (2 * k + 1)
      sum += term
      if (term < sum * EPS) break
    }
    return 1 - (2 / SQRT_PI) * Math.exp(-x2) * sum
  }
  // Modified Lentz evaluation of x + (1/2)/(x + 1/(x + (3/2)/(x + ...))).
  let f = x
  let c = x
  let d = 0
  for (let k = 1; k < 5000; k++) {
    const a = k / 2
    d = x + a * d
    if (Math.abs(d) < TINY) d = TINY
    c = x + a / c
    if (Math.abs(c) < TINY) c = TINY
    d = 1 / d
    const delta = c * d
    f *= delta
    if (Math.abs(delta - 1) < EPS) break
  }
  return Math.exp(-x2) / (SQRT_PI * f)
}

/** Complementary error function erfc(x) = 1 − erf(x) (A&S 7.1.2). */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN
  if (x === Infinity) return 0
  if (x === -Infinity) return 2
  return x >= 0 ? erfcNonNegative(x) : 2 - erfcNonNegative(-x)
}

/** Standard normal density φ(z) = exp(−z²/2)/√(2π). */
export function normalPdf(z: number): number {
  return Math.exp(-0.5 * z * z) / SQRT_2PI
}

/** Standard normal upper tail 1 − Φ(z) = erfc(z/√2)/2, accurate in relative terms far into the tail. */
export function normalUpperTail(z: number): number {
  return 0.5 * erfc(z * Math.SQRT1_2)
}

/** Standard normal cdf Φ(z) = erfc(−z/√2)/2 (A&S 26.2.29). */
export function normalCdf(z: number): number {
  return 0.5 * erfc(-z * Math.SQRT1_2)
}

const ACKLAM_A = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239]
const ACKLAM_B = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1]
const ACKLAM_C = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783]
const ACKLAM_D = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416]

function poly(coefficients: readonly number[], x: number): number {
  let acc = 0
  for (const c of coefficients) acc = acc * x + c
  return acc
}

/** Acklam's rational approximation of Φ⁻¹(p) for 0 < p ≤ 0.5, followed by one Halley step on the exact cdf (P.J. Acklam, 2003). */
function normalQuantileLower(p: number): number {
  let x: number
  if (p < 0.02425) {
    const q = Math.sqrt(-2 * Math.log(p))
    x = poly(ACKLAM_C, q) / (poly(ACKLAM_D, q) * q + 1)
  } else {
    const q = p - 0.5
    const r = q * q
    x = (poly(ACKLAM_A, r) * q) / (poly(ACKLAM_B, r) * r + 1)
  }
  const e = normalCdf(x) - p
  const u = e * SQRT_2PI * Math.exp(0.5 * x * x)
  return x - u / (1 + 0.5 * x * u)
}

/** Standard normal quantile Φ⁻¹(p); ±Infinity at p = 0 or 1, NaN outside [0, 1]. */
export function normalQuantile(p: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1) return NaN
  if (p === 0) return -Infinity
  if (p === 1) return Infinity
  // 1 − p is exact for p ≥ 0.5 (Sterbenz), so the lower-tail kernel serves both halves.
  return p <= 0.5 ? normalQuantileLower(p) : -normalQuantileLower(1 - p)
}

const LANCZOS_G = 7
const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
]

/** ln Γ(x) for x > 0 by the Lanczos approximation, g = 7, 9 terms (Lanczos 1964; Press et al., Numerical Recipes §6.1). */
export function lnGamma(x: number): number {
  if (x < 0.5) {
    // Reflection Γ(x)Γ(1−x) = π / sin(πx).
    return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - lnGamma(1 - x)
  }
  const z = x - 1
  let a = LANCZOS[0] as number
  const t = z + LANCZOS_G + 0.5
  for (let i = 1; i < LANCZOS.length; i++) a += (LANCZOS[i] as number) / (z + i)
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a)
}

/** Continued fraction for the incomplete beta function, modified Lentz (Numerical Recipes §6.4, betacf). */
function betaContinuedFraction(x: number, a: number, b: number): number {
  const qab = a + b
  const qap = a + 1
  const qam = a - 1
  let c = 1
  let d = 1 - (qab * x) / qap
  if (Math.abs(d) < TINY) d = TINY
  d = 1 / d
  let h = d
  for (let m = 1; m <= 10000; m++) {
    const m2 = 2 * m
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2))
    d = 1 + aa * d
    if (Math.abs(d) < TINY) d = TINY
    c = 1 + aa / c
    if (Math.abs(c) < TINY) c = TINY
    d = 1 / d
    h *= d * c
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2))
    d = 1 + aa * d
    if (Math.abs(d) < TINY) d = TINY
    c = 1 + aa / c
    if (Math.abs(c) < TINY) c = TINY
    d = 1 / d
    const delta = d * c
    h *= delta
    if (Math.abs(delta - 1) < EPS) break
  }
  return h
}

/** Regularized incomplete beta I_x(a, b), with y = 1 − x passed separately to keep precision near x = 1 (Numerical Recipes §6.4). */
export function regularizedBeta(x: number, a: number, b: number, y: number = 1 - x): number {
  if (Number.isNaN(x) || Number.isNaN(y) || !(a > 0) || !(b > 0)) return NaN
  if (x <= 0) return 0
  if (y <= 0) return 1
  const lnFront = lnGamma(a + b) - lnGamma(a) - lnGamma(b) + a * Math.log(x) + b * Math.log(y)
  const front = Math.exp(lnFront)
  if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(x, a, b)) / a
  return 1 - (front * betaContinuedFraction(y, b, a)) / b
}

/** Student t upper tail P(T > t) for t ≥ 0 via I_{ν/(ν+t²)}(ν/2, 1/2)/2 (A&S 26.7.1, 26.5.27); symmetric for t < 0. */
export function studentTUpperTail(t: number, df: number): number {
  if (Number.isNaN(t) || Number.isNaN(df) || !(df > 0)) return NaN
  if (df === Infinity) return normalUpperTail(t)
  if (t === Infinity) return 0
  if (t === -Infinity) return 1
  const t2 = t * t
  const denom = df + t2
  const half = 0.5 * regularizedBeta(df / denom, df / 2, 0.5, t2 / denom)
  return t >= 0 ? half : 1 - half
}

/** Student t cdf P(T ≤ t) with ν = df degrees of freedom (df may be fractional, e.g. Welch–Satterthwaite). */
export function studentTCdf(t: number, df: number): number {
  return studentTUpperTail(-t, df)
}

/** Student t quantile: bisection on the tail probability to the last representable t (monotone, so always converges). */
export function studentTQuantile(p: number, df: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(df > 0)) return NaN
  if (p === 0) return -Infinity
  if (p === 1) return Infinity
  if (df === Infinity) return normalQuantile(p)
  const q = Math.min(p, 1 - p)
  if (q === 0.5) return 0
  let lo = 0
  let hi = Math.max(1, 2 * Math.abs(normalQuantile(q)))
  while (studentTUpperTail(hi, df) > q) {
    lo = hi
    hi *= 2
    if (!Number.isFinite(hi)) return p < 0.5 ? -Infinity : Infinity
  }
  for (let i = 0; i < 2000; i++) {
    const mid = 0.5 * (lo + hi)
    if (mid <= lo || mid >= hi) break
    if (studentTUpperTail(mid, df) > q) lo = mid
    else hi = mid
  }
  const t = 0.5 * (lo + hi)
  return p < 0.5 ? -t : t
}

/** Lower regularized gamma P(a, x) by its series, for x < a + 1 (Numerical Recipes §6.2, gser). */
function gammaSeries(a: number, x: number): number {
  let ap = a
  let sum = 1 / a
  let del = sum
  for (let n = 1; n < 10000; n++) {
    ap += 1
    del *= x / ap
    sum += del
    if (Math.abs(del) < Math.abs(sum) * EPS) break
  }
  return sum * Math.exp(-x + a * Math.log(x) - lnGamma(a))
}

/** Upper regularized gamma Q(a, x) by its continued fraction, for x ≥ a + 1 (Numerical Recipes §6.2, gcf, modified Lentz). */
function gammaContinuedFraction(a: number, x: number): number {
  let b = x + 1 - a
  let c = 1 / TINY
  let d = 1 / b
  let h = d
  for (let i = 1; i < 10000; i++) {
    const an = -i * (i - a)
    b += 2
    d = an * d + b
    if (Math.abs(d) < TINY) d = TINY
    c = b + an / c
    if (Math.abs(c) < TINY) c = TINY
    d = 1 / d
    const delta = d * c
    h *= delta
    if (Math.abs(delta - 1) < EPS) break
  }
  return Math.exp(-x + a * Math.log(x) - lnGamma(a)) * h
}

/** Regularized lower incomplete gamma P(a, x) = γ(a, x)/Γ(a) (A&S 6.5.1). */
export function regularizedGammaP(a: number, x: number): number {
  if (Number.isNaN(a) || Number.isNaN(x) || !(a > 0)) return NaN
  if (x <= 0) return 0
  if (x === Infinity) return 1
  return x < a + 1 ? gammaSeries(a, x) : 1 - gammaContinuedFraction(a, x)
}

/** Regularized upper incomplete gamma Q(a, x) = 1 − P(a, x), computed directly so the far tail keeps its digits. */
export function regularizedGammaQ(a: number, x: number): number {
  if (Number.isNaN(a) || Number.isNaN(x) || !(a > 0)) return NaN
  if (x <= 0) return 1
  if (x === Infinity) return 0
  return x < a + 1 ? 1 - gammaSeries(a, x) : gammaContinuedFraction(a, x)
}

/** Chi-square cdf P(X ≤ x) with k degrees of freedom: P(k/2, x/2) (A&S 26.4.19). */
export function chiSquareCdf(x: number, k: number): number {
  return regularizedGammaP(k / 2, x / 2)
}

/** Chi-square upper tail P(X > x), accurate where 1 − cdf would lose digits. */
export function chiSquareUpperTail(x: number, k: number): number {
  return regularizedGammaQ(k / 2, x / 2)
}

/**
 * Chi-square quantile: the x with P(X ≤ x) = p, by bisection on whichever tail is smaller (monotone, so it always
 * converges to the last representable x). 0 at p = 0, Infinity at p = 1, NaN outside [0, 1] or for k ≤ 0.
 */
export function chiSquareQuantile(p: number, k: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1 || !(k > 0) || !Number.isFinite(k)) return NaN
  if (p === 0) return 0
  if (p === 1) return Infinity
  const lower = p <= 0.5
  const tail = lower ? p : 1 - p
  // the tail probability falls as x grows for the upper tail and rises for the lower one
  const beyond = (x: number) => (lower ? chiSquareCdf(x, k) > tail : chiSquareUpperTail(x, k) < tail)
  let lo = 0
  let hi = Math.max(1, 2 * k)
  while (!beyond(hi)) {
    lo = hi
    hi *= 2
    if (!Number.isFinite(hi)) return Infinity
  }
  for (let i = 0; i < 2000; i++) {
    const mid = 0.5 * (lo + hi)
    if (mid <= lo || mid >= hi) break
    if (beyond(mid)) hi = mid
    else lo = mid
  }
  return 0.5 * (lo + hi)
}
