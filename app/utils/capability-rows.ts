/** The key of a lot capability row: one parameter under one specification revision. */
export function capabilityRowKey(r: { step: string; name: string; qualifier: number; revisionId: number }): string {
  return `${r.step}|${r.name}|${r.qualifier}|${r.revisionId}`
}
