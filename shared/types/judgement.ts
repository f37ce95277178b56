// What the judgement of one posted run produces: shared by the judge, the write path and the repositories that
// store it, so that none of them imports another's types.

export type AppliedLimit = { lsl: number | null; usl: number | null; target: number | null; rule: 'simple' | 'guarded'; guardBand: number }

export type JudgedMeasurement = {
  name: string; qualifier: number; value: number; unit: string; uncertainty: number | null
  limit: AppliedLimit | null; verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null
  derived: boolean; excessDb: number | null; outOfSpec: boolean
  /** where along a sweep a derived value was found (the mask margin's worst offset, Hz); null otherwise */
  atOffsetHz: number | null
  /** a value no working bench produces: stored and judged, kept out of capability and charts */
  implausible: boolean
}

export type RunJudgement = {
  measurements: JudgedMeasurement[]
  verdict: 'pass' | 'fail'
  missingRequired: { name: string; qualifier: number }[]
  measurementIssue: boolean
}
