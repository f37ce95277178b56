// A lot as GET /api/lots/:code answers it, and its units list (GET /api/lots/:code/units).
import type { LotStatus } from '../utils/lot-status'
import type { EngineeringSource } from './lot-kind'

export type LotView = {
  code: string; status: LotStatus; plannedQty: number | null; holdReason: string | null
  createdAt: string; releasedAt: string | null; releasedBy: { id: number; name: string } | null; shippedAt: string | null
  /** an engineering or trial lot: kept and judged, left out of the cross-lot views unless asked for */
  engineering: boolean; engineeringSource: EngineeringSource | null
  /** runs received after the release, for quality to review; null before a release */
  runsSinceRelease: number | null
  /** of the units that passed every step, how many are in a dispatched shipment */
  shipping: { units: number; dispatchedUnits: number }
  /** before a release: how many units the release check would hold back */
  readiness: { units: number; notReady: number } | null
  product: { partNumber: string; name: string; steps: string[] }
  counts: {
    planned: number | null; units: number; completed: number; passed: number; failed: number; inProgress: number; retested: number
    firstRunAt: string | null; lastRunAt: string | null
  }
}
export type LotDetailReply = { lot: LotView }

export type LotUnitVerdict = 'pass' | 'fail' | 'incomplete' | 'untested'
export type LotUnitRow = {
  serial: string; verdict: LotUnitVerdict; firstPass: boolean | null; stepsTested: number; lastStep: string | null
  maxAttempts: number; runs: number; station: string | null; lastTestedAt: string | null
}
export type LotUnitsPage = {
  lot: string; page: number; pageSize: number
  /** matching units; when `totalExact` is false there are more than this (a bounded count) */
  total: number; totalExact: boolean; pageCount: number
  /** the cursor of the row after this page (`after=`), null on the last page */
  next: string | null
  sort: 'serial' | 'verdict' | 'attempts' | 'runs' | 'station' | 'date' | 'step'; dir: 'asc' | 'desc'
  units: LotUnitRow[]
  /** every station that tested a unit of the lot, for the filter */
  stations: string[]
}

/** One lot in the list of lots (GET /api/lots), newest first. */
export type LotListItem = {
  code: string; partNumber: string; productName: string; status: LotStatus; plannedQty: number | null
  unitsTested: number; createdAt: string
  /** an engineering or trial lot (shown with a badge; left out of the cross-lot views) */
  engineering: boolean
}
export type LotList = { lots: LotListItem[] }
