// A unit's overall standing from its latest result at each step of its product (pure).

export type StepVerdict = { step: string; latestVerdict: 'pass' | 'fail' }

/** fail when any step's latest result is a fail; pass when every step of the product has a passing latest; otherwise null (incomplete). */
export function overallVerdict(steps: readonly string[], states: readonly StepVerdict[]): 'pass' | 'fail' | null {
  if (states.some((s) => s.latestVerdict === 'fail')) return 'fail'
  const passed = new Set(states.filter((s) => s.latestVerdict === 'pass').map((s) => s.step))
  return steps.length > 0 && steps.every((s) => passed.has(s)) ? 'pass' : null
}
