import type { ImpactUnitsPage } from '../services/calibration/impact-views'
import { wholeNumberParam } from './query-values'

/** ?page, pageSize (at most 500), lot (a lot code) of a calibration impact review's units. */
export function parseImpactUnitsPage(raw: Record<string, unknown>): ImpactUnitsPage {
  const page = wholeNumberParam(raw, 'page', 1, 100_000)
  const pageSize = wholeNumberParam(raw, 'pageSize', 50, 500)
  const lotValue = Array.isArray(raw.lot) ? raw.lot[0] : raw.lot
  const lot = typeof lotValue === 'string' && lotValue ? lotValue.slice(0, 32) : undefined
  return { page, pageSize, lot }
}
