// The order a parameter list is read in: the product's steps as tested, then each measurement by name, then its
// offsets or harmonics from low to high (100 Hz before 1 kHz before 10 kHz; H2 before H3 before H10).

export type OrderedParameter = { step: string; name: string; qualifier: number; label: string }

/** Sorts a copy: step order (steps the product does not list go last), then label, then qualifier numerically. */
export function orderParameters<T extends OrderedParameter>(items: T[], steps: string[]): T[] {
  const rank = (s: string) => { const i = steps.indexOf(s); return i < 0 ? steps.length : i }
  return [...items].sort((a, b) => rank(a.step) - rank(b.step)
    || a.step.localeCompare(b.step)
    || a.label.localeCompare(b.label)
    || a.qualifier - b.qualifier)
}
