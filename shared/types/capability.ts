// What the lot summary, the parameter view, the phase-noise view and trends answer. Every capability figure is
// tagged with the specification revision its values were judged by and carries that revision's limits, so a page
// can never show one figure taken over two limit sets.
import type { CapabilityBand, CapabilityIntervals } from '../utils/capability'

/** The revision a group of values was judged by: revisionId 0 (revision null) for values stored without one. */
/** The specification revision figures were judged by, and when it was approved (null for values stored without one). */
export type RevisionTag = { revisionId: number; revision: number | null; approvedAt: string | null }

/** A revision a lot's values were judged by, with when it took effect. */
export type JudgedRevision = RevisionTag & { effectiveAt: string | null }

/** How many values of one parameter (or step) were judged by a revision: the choices of a per-revision view. */
export type RevisionCount = RevisionTag & { n: number }

export type Population = 'first' | 'all'

export type YieldInterval = { p: number; lo: number; hi: number } | null

export type StepYield = {
  step: string; runs: number; units: number; firstPass: number; latestPass: number; finalPass: number
  firstPassYield: YieldInterval; finalYield: YieldInterval
}

/** One parameter of a lot under one revision: the sample, that revision's limits and the indices against them. */
export type CapabilityRow = RevisionTag & {
  step: string; name: string; qualifier: number; offsetHz?: number; harmonic?: number; label: string; unit: string
  n: number; mean: number | null; sigmaWithin: number | null; sigmaOverall: number | null; min: number; max: number
  lsl: number | null; usl: number | null; target: number | null
  cp: number | null; cpk: number | null; pp: number | null; ppk: number | null
  /** 95 % intervals; Cp/Cpk approximate (σ within), Pp exact under normality, Ppk Bissell (σ overall) */
  intervals: CapabilityIntervals
  /** values of the sample outside this revision's limits */
  outOfSpec: number
  observedPpm: number | null; expectedPpm: number | null
  band: CapabilityBand; keyCharacteristic: boolean
  /** how many revisions this parameter's values of the lot were judged by (more than 1: read the rows together) */
  revisionsOfParameter: number
}

export type FailureParetoRow = { step: string; name: string; qualifier: number; label: string; count: number; percent: number; cumulativePercent: number }

/**
 * What the figures of a lot view do not include yet: runs stored before the view was asked for but not yet folded
 * in (a fold of the lot was running), rows awaiting a rebuild after a retest became a unit's first attempt, and
 * parameters whose moving ranges and drift await a repair after a late value. The background fold catches up.
 */
export type StatsBacklog = { asOf: string; runs: number; rebuilds: number; repairs: number }

export type LotSummary = {
  lot: { code: string; partNumber: string; productName: string; status: string; plannedQty: number | null; unitsTested: number }
  population: Population
  steps: StepYield[]
  rolledThroughputYield: number | null
  /** the revisions the capability rows were judged by, oldest first; more than one means figures are per revision */
  revisions: JudgedRevision[]
  capability: CapabilityRow[]
  pareto: FailureParetoRow[]
  /** null when the figures include every run stored before the summary was asked for */
  backlog: StatsBacklog | null
}

export type ControlPoint = { index: number; runId: string; serial: string; station: string; startedAt: string; value: number; rules: number[] }

/** Charts of one parameter of one lot, over the values judged by one revision. */
export type ParameterView = {
  lot: { code: string; partNumber: string }
  parameter: RevisionTag & {
    step: string; name: string; qualifier: number; label: string; unit: string | null
    lsl: number | null; usl: number | null; target: number | null; qualifierKind: 'offsetHz' | 'harmonic' | null
  }
  /** every revision this parameter's values were judged by in the lot, oldest first */
  revisions: RevisionCount[]
  n: number
  histogram: { edges: number[]; counts: number[] } | null
  normal: { mean: number; sigma: number } | null
  control: { baselineN: number; frozen: boolean; centre: number; sigma: number; ucl: number; lcl: number; points: ControlPoint[] } | null
  ewma: { lambda: number; L: number; asymptoticUcl: number; asymptoticLcl: number; points: { index: number; z: number; ucl: number; lcl: number; signal: boolean }[] } | null
  /** null with fewer than driftMinUnits values: too few to extrapolate a slope per 1 000 units from */
  drift: { slopePer1000: number; interval: [number, number] | null; n: number } | null
  driftMinUnits: number
  /** true when the drift is held back until a late value's repair (the background fold does it) */
  driftPending: boolean
  backlog: StatsBacklog | null
}

/**
 * n, min and max are exact; p10, median and p90 are placed in the kept bins of width `resolution` (dBc/Hz) and lie
 * within one `resolution` of the sample's type-7 quantiles.
 */
export type PhaseNoiseOffset = {
  offsetHz: number; n: number; median: number | null; p10: number | null; p90: number | null; min: number | null; max: number | null
  usl: number | null; lsl: number | null; resolution: number | null
}

/** Phase noise of a lot at one step, over the first attempts judged by one revision and against that revision's mask. */
export type PhaseNoiseView = {
  lot: { code: string; partNumber: string; productName: string; status: string; steps: string[] }
  step: string
  /** the revision shown: the one asked for, else the latest with values, else the one in force now */
  revision: number | null
  revisionId: number
  /** when the revision shown was approved */
  approvedAt: string | null
  /** the revisions this step's values were judged by, oldest first, with their count of phase-noise runs */
  revisions: RevisionCount[]
  population: 'first'
  offsets: PhaseNoiseOffset[]
  /** n, mean, min, max and the histogram's counts are exact; the percentiles lie within `resolution` (s) of the sample's */
  jitter: {
    unit: 's'; n: number; usl: number | null; mean: number; percentiles: { p10: number; p50: number; p90: number }
    min: number; max: number; resolution: number; histogram: { edges: number[]; counts: number[] }
  } | null
}

/** One lot's capability for a parameter under one revision, against that revision's limits. */
export type TrendCapability = RevisionTag & {
  lsl: number | null; usl: number | null
  n: number; mean: number; sigma: number | null; sigmaWithin: number | null; outOfSpec: number
  cp: number | null; cpk: number | null; pp: number | null; ppk: number | null; intervals: CapabilityIntervals; band: CapabilityBand
}

/**
 * One lot of a trend. Location and spread (n, mean, σ, min, max) pool every revision: they do not depend on limits,
 * and the across-lot chart reads them. Capability is given per revision in `capability`.
 */
export type TrendLot = {
  /** engineering: an engineering or trial lot, present only when the view includes them */
  code: string; status: string; engineering: boolean; createdAt: string; firstRunAt: string; lastRunAt: string
  n: number; mean: number; sigma: number | null; sigmaWithin: number | null; min: number; max: number
  capability: TrendCapability[]
  beyondLimits: boolean; rules: number[]
}

/** One parameter of one part as the trends and station-comparison views name it, with the limits of the revision in force now. */
export type SeriesPart = { partNumber: string; name: string; steps: string[] }
export type SeriesParameter = {
  step: string; name: string; qualifier: number; offsetHz?: number; harmonic?: number; label: string
  unit: string | null; lsl: number | null; usl: number | null; target: number | null; revision: number | null; approvedAt: string | null
}

export type TrendsView = {
  part: SeriesPart
  /** the parameter with the limits of the revision in force now (drawn on the spread chart) */
  parameter: SeriesParameter
  from: string | null; to: string | null
  /** whether engineering and trial lots are among the lots (`?engineering=include`) or left out (the default) */
  engineering: 'include' | 'exclude'
  lots: TrendLot[]
  acrossLots: { n: number; centre: number; sigma: number; ucl: number; lcl: number } | null
  drift: { slopePerLot: number; interval: [number, number] | null; n: number; r2: number | null } | null
}

/** Location and spread pooled over stations' rows. */
export type PooledSummary = { n: number; mean: number | null; sigmaOverall: number | null; sigmaWithin: number | null; min: number | null; max: number | null }

/** One station against all the others pooled: its bias from the pooled mean and Welch's test. */
export type StationComparisonRow = {
  station: string; n: number; mean: number | null; sigma: number | null; sigmaWithin: number | null; min: number | null; max: number | null
  bias: number | null; welch: { t: number; df: number; p: number } | null; largestBias: boolean
}

/** GET /api/stations/compare */
export type StationComparisonView = {
  part: SeriesPart
  parameter: SeriesParameter
  lot: string | null
  /** whether engineering and trial lots are pooled (`?engineering=include`); a lot named is compared whatever its kind */
  engineering: 'include' | 'exclude'
  pooled: PooledSummary & { outOfSpec: number }
  stations: StationComparisonRow[]
}
