// How a stored measurement is named on screen and which chip its verdict wears; numbers are value-format.ts's job.
import { parameterLabel } from './value-format'

/** "Phase noise @ 10 kHz": the measurement's label with its offset or harmonic. */
export function measurementLabel(m: { name: string; offsetHz?: number; harmonic?: number }): string {
  return parameterLabel(m.name, m.offsetHz ?? m.harmonic ?? null)
}

export type ChipVerdict = 'pass' | 'fail' | 'info' | 'marginal'

/** A pass inside the guard band is still a pass, shown as MARGINAL so the bench looks twice. */
export function chipVerdict(m: { verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null }): ChipVerdict {
  return m.verdict === 'pass' && m.zone === 'guard' ? 'marginal' : m.verdict
}
