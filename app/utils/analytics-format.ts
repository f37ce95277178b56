// Words of the analytics views; every number is formatted by shared/utils/value-format.ts, every time by plant-time.ts.
import { DASH } from '#shared/utils/value-format'

export const BAND_WORDS: Record<string, string> = { capable: 'CAPABLE', marginal: 'MARGINAL', not_capable: 'NOT CAPABLE', too_few: 'FEW VALUES', unknown: 'NO INDEX' }


/** "4 s", "3 min 12 s", "2 h 5 min", "3 d" since a moment. */
export function ageText(fromIso: string | null | undefined, nowMs: number): string {
  if (!fromIso) return 'never'
  const s = Math.max(0, Math.floor((nowMs - new Date(fromIso).getTime()) / 1000))
  if (s < 60) return `${s} s`
  if (s < 3600) return `${Math.floor(s / 60)} min ${s % 60} s`
  if (s < 86_400) return `${Math.floor(s / 3600)} h ${Math.floor((s % 3600) / 60)} min`
  return `${Math.floor(s / 86_400)} d`
}

export const RULE_TEXT: Record<number, string> = {
  1: 'Rule 1: one point beyond 3σ from the centre line',
  2: 'Rule 2: two of three points beyond 2σ on the same side',
  3: 'Rule 3: four of five points beyond 1σ on the same side',
  4: 'Rule 4: eight points in a row on one side of the centre line',
}

/**
 * Where limits come from, worded alike on every chart and table that uses them: "Limits: VFW-T3-375 rev. 4, approved
 * 2026-11-03"; several revisions "Limits: VFW-T3-375 rev. 3 (approved 2026-10-01) and rev. 4 (approved 2026-11-03)".
 */
export function limitsSource(partNumber: string | null | undefined, revisions: readonly { revision: number | null; approvedAt?: string | null }[]): string {
  const known = revisions.filter((r) => r.revision !== null)
  if (!known.length) return 'Limits: none (values stored without a specification revision)'
  const one = (r: { revision: number | null; approvedAt?: string | null }, brackets: boolean) => {
    const when = r.approvedAt ? (brackets ? ` (approved ${r.approvedAt.slice(0, 10)})` : `, approved ${r.approvedAt.slice(0, 10)}`) : ''
    return `rev. ${r.revision}${when}`
  }
  const part = partNumber ? `${partNumber} ` : ''
  if (known.length === 1) return `Limits: ${part}${one(known[0]!, false)}`
  const words = known.map((r) => one(r, true))
  return `Limits: ${part}${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`
}

/** "rev. 3"; values stored without a revision read "no rev.". */
export function revisionText(revision: number | null | undefined): string {
  return revision === null || revision === undefined ? 'no rev.' : `rev. ${revision}`
}

/** "revision 2", "revisions 2 and 3", "revisions 1, 2 and 4" (a missing revision reads "none recorded"). */
export function revisionList(revisions: readonly (number | null)[]): string {
  const words = revisions.map((r) => (r === null ? 'none recorded' : String(r)))
  if (words.length <= 1) return `revision ${words[0] ?? DASH}`
  return `revisions ${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`
}

/** Why a lot is flagged on the across-lot chart of its means ("" when it is not). */
export function trendFlagNote(l: { beyondLimits: boolean; rules: number[] }): string {
  const parts: string[] = []
  if (l.beyondLimits) parts.push('mean beyond the across-lot limits')
  for (const r of l.rules) if (r !== 1) parts.push(RULE_TEXT[r] ?? `Rule ${r}`)
  return parts.join('; ')
}
