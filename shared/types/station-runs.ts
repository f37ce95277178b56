/** One of a station's latest runs, as the station page lists them. */
export type StationRecentRun = {
  id: string
  serial: string
  partNumber: string
  lot: string
  step: string
  attempt: number
  verdict: 'pass' | 'fail'
  startedAt: string
  finishedAt: string
}
