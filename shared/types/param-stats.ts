// The rows of the lot parameter statistics, as the fold, the repositories and the readers share them (server only).

export type ParamRowKey = { lotId: number; step: string; name: string; qualifier: number; revisionId: number; stationId: number }

export type ParamRow = ParamRowKey & {
  unit: string
  /** first-attempt values counted */
  n: number
  /** the value the sums are taken about (the first value seen), so that large offsets lose no precision */
  shift: number
  sumD: number
  sumSqD: number
  min: number
  max: number
  mrSum: number
  mrN: number
  lastValue: number | null
  lastStartedAt: number | null
  /** a value arrived older than the latest one: the moving range must be recomputed from the measurements */
  mrStale: boolean
  outOfSpec: number
  failAll: number
} & AllAttemptSums

/** The same sums over every plausible attempt (retests included): the second population of the row. */
export type AllAttemptSums = {
  aN: number; aShift: number; aSumD: number; aSumSqD: number; aMin: number; aMax: number
  aMrSum: number; aMrN: number; aLastValue: number | null; aLastStartedAt: number | null; aMrStale: boolean; aOutOfSpec: number
}

export type StoredValue = {
  value: number; unit: string; firstAttempt: boolean; startedAt: number; id: number
  lsl: number | null; usl: number | null; failed: boolean
  /** kept out of the sample: counted among failures only */
  implausible: boolean
}

/** The additive part of a statistics row, which readers pool across stations. */
export type StatRow = {
  n: number; shift: number; sumD: number; sumSqD: number; min: number; max: number
  mrSum: number; mrN: number; outOfSpec: number; failAll: number
}
