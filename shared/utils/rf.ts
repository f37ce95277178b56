function requireFinite(name: string, x: number): void {
  if (!Number.isFinite(x)) throw new RangeError(`${name} must be a finite number, got ${x}`)
}

/** Fractional frequency offset (f − f_nominal)/f_nominal, in parts per million. */
export function ppmError(measuredHz: number, nominalHz: number): number {
  requireFinite('measuredHz', measuredHz)
  requireFinite('nominalHz', nominalHz)
  if (nominalHz <= 0) throw new RangeError(`nominalHz must be > 0, got ${nominalHz}`)
  return ((measuredHz - nominalHz) / nominalHz) * 1e6
}

/** Phase-noise increase of an ideal ×N multiplier (N < 1 describes a divider). */
export function multiplicationPenaltyDb(n: number): number {
  requireFinite('n', n)
  if (n <= 0) throw new RangeError(`multiplication factor must be > 0, got ${n}`)
  return 20 * Math.log10(n)
}

export function dbmToMw(dbm: number): number {
  if (Number.isNaN(dbm)) throw new RangeError('dBm value is NaN')
  return 10 ** (dbm / 10)
}

export function mwToDbm(mw: number): number {
  if (Number.isNaN(mw) || mw < 0) throw new RangeError(`power in mW must be ≥ 0, got ${mw}`)
  return 10 * Math.log10(mw)
}

/** Total power of uncorrelated signals; an empty list is no power at all. */
export function sumPowersDbm(list: readonly number[]): number {
  let totalMw = 0
  for (const p of list) totalMw += dbmToMw(p)
  return mwToDbm(totalMw)
}

function requireHarmonic(n: number): void {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`harmonic number must be an integer ≥ 1, got ${n}`)
}

/** Fourier amplitude of harmonic n of a unit-amplitude ideal square wave (50 % duty). */
export function squareWaveHarmonicAmplitude(n: number): number {
  requireHarmonic(n)
  return n % 2 === 1 ? 4 / (n * Math.PI) : 0
}

/** Level of harmonic n relative to the fundamental, in dBc (odd: −20·log10 n; even: none). */
export function squareWaveHarmonicDbc(n: number): number {
  requireHarmonic(n)
  return n % 2 === 1 ? -20 * Math.log10(n) : -Infinity
}

/** Output phase noise of an ideal ×N multiplier at the same offset. */
export function idealMultipliedPhaseNoise(refDbcHz: number, n: number): number {
  requireFinite('refDbcHz', refDbcHz)
  return refDbcHz + multiplicationPenaltyDb(n)
}
