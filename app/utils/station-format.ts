/** Maps a problem's JSON-Pointer errors to a pointer → message table for field-level display. */
export function pointerErrors(e: any): Record<string, string> {
  const out: Record<string, string> = {}
  for (const x of e?.data?.errors ?? []) out[String(x.pointer)] ??= String(x.message)
  return out
}
