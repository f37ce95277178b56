// Colours of the night wall display, shared by its panels.
import type { ProportionInterval } from '#shared/utils/yield'

export const FLOOR_VERDICT: Record<string, string> = { pass: 'bg-verdict-pass text-white', fail: 'bg-verdict-fail text-white' }

/** A first-pass yield's colour on the dark panel: green from 95 %, amber from 85 %, red below. */
export function floorYieldClass(y: ProportionInterval | null): string {
  if (!y) return 'text-night-text/50'
  return y.p >= 0.95 ? 'text-[#8fd19e]' : y.p >= 0.85 ? 'text-[#f0c36a]' : 'text-[#f29b93]'
}
