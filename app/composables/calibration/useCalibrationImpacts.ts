import type { ImpactList } from '#shared/types/calibration-impact'

/** Every calibration impact review, open ones first. */
export function useCalibrationImpacts() {
  return useFetch<ImpactList>('/api/calibration-impacts', { default: () => ({ impacts: [] }) })
}
