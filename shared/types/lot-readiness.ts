/** A unit's latest result at one step, as the release check reads it (a unit with no step at all comes once, with a null step). */
export type UnitStepRow = { serial: string; step: string | null; latestVerdict: 'pass' | 'fail' | null; calibrationLapsed: boolean }
