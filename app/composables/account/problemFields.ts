/** The message of a problem+json answer and its per-field messages keyed by the body field the pointer names. */
export function problemFields(e: any, fallback: string): { detail: string; fields: Record<string, string> } {
  const data = e?.data ?? {}
  const fields: Record<string, string> = {}
  for (const err of Array.isArray(data.errors) ? data.errors : []) {
    const key = String(err?.pointer ?? '').replace(/^\//, '')
    if (key && !fields[key]) fields[key] = String(err.message ?? '')
  }
  return { detail: typeof data.detail === 'string' ? data.detail : fallback, fields }
}
