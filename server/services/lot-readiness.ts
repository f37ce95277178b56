// Whether every unit of a lot is ready to release: a result at every step of the product, the latest one a pass,
// and that latest result taken with instruments in calibration at its start (the run's calibration flag).

import type { UnitStepRow } from '../../shared/types/lot-readiness'

export type { UnitStepRow }

export type NotReadyUnit = { serial: string; problems: string[] }

export type LotReadiness = { units: number; notReady: NotReadyUnit[] }

/** Rows are one per unit and step tested (a unit with no step at all comes once, with a null step). */
export function lotReadiness(rows: readonly UnitStepRow[], steps: readonly string[]): LotReadiness {
  const byUnit = new Map<string, UnitStepRow[]>()
  for (const r of rows) {
    const list = byUnit.get(r.serial) ?? []
    if (r.step !== null) list.push(r)
    byUnit.set(r.serial, list)
  }
  const notReady: NotReadyUnit[] = []
  for (const [serial, tested] of byUnit) {
    const problems: string[] = []
    const at = new Map(tested.map((r) => [r.step!, r]))
    for (const step of steps) {
      const r = at.get(step)
      if (!r) problems.push(`no result at ${step}`)
      else if (r.latestVerdict !== 'pass') problems.push(`latest ${step} result is a fail`)
      else if (r.calibrationLapsed) problems.push(`latest ${step} result was taken past a calibration due date`)
    }
    if (problems.length) notReady.push({ serial, problems })
  }
  notReady.sort((a, b) => (a.serial < b.serial ? -1 : a.serial > b.serial ? 1 : 0))
  return { units: byUnit.size, notReady }
}
