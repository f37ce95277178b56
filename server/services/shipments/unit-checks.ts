// Whether a unit may ship (pure): its lot, its latest result at every step by test time, the calibration behind
// each verdict, its product's retest limits and quality's dispositions. The same rules serve the serial preview
// (verdict only) and the release of a shipment (everything).

export type CheckedUnit = { unitId: number; productId: number; partNumber: string; serial: string; lot: string; lotStatus: string; steps: string[] }
export type CheckedStep = { step: string; attempts: number; latestVerdict: 'pass' | 'fail'; calibrationLapsed: boolean }
export type CheckedDisposition = { step: string; kind: 'scrap' | 'rework' | 'deviation'; reason: string; atAttempts: number }

export type UnitProblem = {
  text: string
  /** a hold or a scrap decision stops the unit even under a deviation */
  hard: boolean
}

export function unitProblems(u: CheckedUnit, states: readonly CheckedStep[], limits: ReadonlyMap<string, number> | undefined, dispositions: readonly CheckedDisposition[]): UnitProblem[] {
  const out: UnitProblem[] = []
  if (u.lotStatus === 'on_hold') out.push({ text: `lot ${u.lot} is on hold`, hard: true })
  else if (u.lotStatus !== 'released' && u.lotStatus !== 'shipped') out.push({ text: `lot ${u.lot} is not released`, hard: false })
  for (const d of dispositions) if (d.kind === 'scrap') out.push({ text: `scrapped at ${d.step}: ${d.reason}`, hard: true })
  const at = new Map(states.map((s) => [s.step, s]))
  for (const step of u.steps) {
    const s = at.get(step)
    if (!s) { out.push({ text: `no result at ${step}`, hard: false }); continue }
    if (s.latestVerdict !== 'pass') out.push({ text: `latest ${step} result is a fail`, hard: false })
    else if (s.calibrationLapsed) out.push({ text: `latest ${step} result was taken past a calibration due date`, hard: false })
    const max = limits?.get(step)
    if (max !== undefined && s.attempts > max) {
      // a rework or deviation decided at this many attempts or more covers them; a later attempt needs a new decision
      const covered = dispositions.some((d) => d.step === step && (d.kind === 'rework' || d.kind === 'deviation') && d.atAttempts >= s.attempts)
      if (!covered) out.push({ text: `${s.attempts} attempts at ${step} exceed the retest limit of ${max} with no rework or deviation decision`, hard: false })
    }
  }
  return out
}
