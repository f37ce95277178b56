/** "YYYY-MM-DD HH:MM" in UTC, the way the floor and the stations log times; a dash for none. */
export function utcMinute(value: string | Date | null | undefined): string {
  return value ? new Date(value).toISOString().slice(0, 16).replace('T', ' ') : '—'
}

/** Maps a problem's JSON-Pointer errors to a pointer → message table for field-level display. */
export function pointerErrors(e: any): Record<string, string> {
  const out: Record<string, string> = {}
  for (const x of e?.data?.errors ?? []) out[String(x.pointer)] ??= String(x.message)
  return out
}
