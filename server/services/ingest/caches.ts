// The in-process caches of what every posted run reads: products and their approved limits (counter `catalogue`) and
// lots (counter `lots`), invalidated through the database (services/cache-versions.ts). Calibration history has its
// own counter and cache: services/calibration/in-force.ts.
import { VersionedCache } from '../cache-versions'

export const productCache = new VersionedCache<string, unknown>()
export const specCache = new VersionedCache<number, unknown>()
export const lotCache = new VersionedCache<string, unknown>()
